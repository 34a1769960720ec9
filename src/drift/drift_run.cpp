#include "cullcast/drift/drift_run.hpp"

#include <omp.h>

#include <algorithm>
#include <chrono>
#include <limits>
#include <optional>
#include <cmath>
#include <sstream>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/currents/gridded_field.hpp"
#include "cullcast/drift/backward_drift.hpp"
#include "cullcast/drift/checkpoint.hpp"
#include "cullcast/drift/drift_step.hpp"
#include "cullcast/drift/grid_stepper.hpp"
#include "cullcast/drift/track_writer.hpp"
#include "cullcast/reefs/reef_lookup.hpp"

namespace cullcast::drift {
namespace fs = std::filesystem;
namespace {

using Clock = std::chrono::steady_clock;

double seconds_since(Clock::time_point t) {
  return std::chrono::duration<double>(Clock::now() - t).count();
}

double event_length_s(const study::SpawningEvent& e, const study::LarvaeSettings& l) {
  return e.hours * 3600.0 + (l.precompetent_days + l.competent_days) * 86400.0;
}

std::string describe_time(const currents::Calendar& c, double s) {
  return format_iso8601(c.to_civil(s));
}

// Every release point of an event lies on land or off the currents grid: the
// release sources and the currents do not cover the same sea, and the drift
// could only report larvae that never moved. `p`: this event's particles
// when this process holds all of them (their extent goes into the message).
[[noreturn]] void no_release_over_water(const std::string& label, std::uint64_t points, const ParticleSet* p,
                                        const currents::GridSummary& g, const study::Study& study) {
  std::ostringstream m;
  m.precision(6);
  m << label << ": none of the " << points << " release points lies over water in the currents";
  if (p != nullptr && p->size() > 0) {
    const auto [lon_lo, lon_hi] = std::minmax_element(p->lon.begin(), p->lon.end());
    const auto [lat_lo, lat_hi] = std::minmax_element(p->lat.begin(), p->lat.end());
    m << " (release points span longitude " << *lon_lo << " to " << *lon_hi << ", latitude " << *lat_lo
      << " to " << *lat_hi << "; ";
  } else {
    m << " (";
  }
  m << "the currents grid covers longitude " << g.lon_min << " to " << g.lon_max << ", latitude " << g.lat_min
    << " to " << g.lat_max << ", " << std::lround(100.0 * g.land_fraction) << " % of it land)"
    << ": the reef layer '" << study.reefs.layer.string()
    << "', its aggregations and the [currents] files must cover the same sea, with water where the reefs are";
  throw InputError(m.str());
}

ParticleSet particles_from(const std::vector<reefs::ReleasePoint>& plan) {
  ParticleSet p;
  p.resize(plan.size());
  for (std::size_t i = 0; i < plan.size(); ++i) {
    p.lon[i] = plan[i].lon;
    p.lat[i] = plan[i].lat;
    p.depth_m[i] = static_cast<float>(plan[i].depth_m);
    p.release_s[i] = static_cast<float>(plan[i].release_offset_s);
    p.weight[i] = plan[i].weight;
    p.source[i] = plan[i].source;
    p.index[i] = plan[i].particle;
  }
  return p;
}

LogTables tables_for(const study::Study& study, const currents::CurrentField& field,
                     const reefs::ReefSet& reefs, const std::vector<reefs::ReleaseSource>& sources) {
  LogTables t;
  for (const auto& s : sources) {
    t.source_ids.push_back(s.id);
    t.source_kinds.push_back(s.kind == reefs::SourceKind::reef ? 0 : 1);
    t.source_reefs.push_back(s.reef_index);
  }
  for (const auto& r : reefs.reefs()) t.reef_ids.push_back(r.id);
  for (const auto& e : study.spawning) {
    t.event_labels.push_back(e.label);
    t.event_starts_s.push_back(field.calendar().to_seconds(e.start));
  }
  t.calendar = field.calendar();
  t.attributes = {{"cullcast_version", CULLCAST_VERSION},
                  {"study_name", study.study.name},
                  {"scenario_file", study.scenario_file.string()},
                  {"seed", std::to_string(study.study.seed)},
                  {"integration_scheme", study.motion.scheme},
                  {"earth_model", study.motion.earth}};
  return t;
}

// Fields for StepExtras in production: diffusivities and sea floor from
// GriddedField, temperature and chlorophyll from the currents.
struct FieldSources {
  const currents::CurrentField* currents = nullptr;
  std::optional<currents::GriddedField> kh_field, kv_field, floor;
  double kh(double lon, double lat, double d) const noexcept {
    return kh_field ? kh_field->sample(lon, lat, d) : std::nan("");
  }
  double kv(double lon, double lat, double d) const noexcept {
    return kv_field ? kv_field->sample(lon, lat, d) : std::nan("");
  }
  double sea_floor_m(double lon, double lat) const noexcept {
    return floor ? floor->sample(lon, lat, 0) : std::numeric_limits<double>::infinity();
  }
  double temperature_c(double t, double lon, double lat, double d) const noexcept {
    return currents->sample_scalar(currents::ScalarKind::temperature, t, lon, lat, d);
  }
  double chlorophyll_mg_m3(double t, double lon, double lat, double d) const noexcept {
    return currents->sample_scalar(currents::ScalarKind::chlorophyll, t, lon, lat, d);
  }
};

// Builds the optional physics; `describe` lists what is on.
StepExtras<FieldSources> make_extras(const study::Study& study, currents::CurrentField& field,
                                     FieldSources& sources, std::string& describe) {
  const auto& m = study.motion;
  StepExtras<FieldSources> x;
  sources.currents = &field;
  x.fields = &sources;
  x.kh_m2_s = m.kh_m2_s;
  x.kv_m2_s = m.kv_m2_s;
  x.smagorinsky_c = m.smagorinsky_c;
  x.spacing_m = field.grid().mean_spacing_m > 0 ? field.grid().mean_spacing_m : 1000.0;
  x.depth = DepthRule(m);
  const std::filesystem::path dfile =
      m.diffusivity_file.empty() ? std::filesystem::path(field.files().front()) : m.diffusivity_file;
  if (m.kh_from == "field") {
    sources.kh_field = currents::GriddedField::read(dfile, m.kh_variable, "ocean_tracer_xy_laplacian_diffusivity");
    x.kh_mode = KhMode::field;
    describe += " Kh from " + sources.kh_field->description() + ";";
  } else if (m.kh_from == "smagorinsky") {
    x.kh_mode = KhMode::smagorinsky;
    describe += " Kh Smagorinsky C=" + std::to_string(m.smagorinsky_c) + ";";
  }
  if (m.depth == "3d" && m.kv_from == "field") {
    sources.kv_field = currents::GriddedField::read(dfile, m.kv_variable, "ocean_vertical_tracer_diffusivity");
    x.kv_mode = KvMode::field;
    describe += " Kv from " + sources.kv_field->description() + ";";
  }
  if (m.depth == "3d") {
    sources.floor = currents::GriddedField::sea_floor(field.files().front(), field.variables().u);
    describe += " depth 3d (w " + std::string(field.variables().w.empty() ? "absent" : "used") + ");";
  } else if (m.depth == "band") {
    describe += " depth band;";
  }
  if (!m.depth_by_age.empty()) describe += " depth by age;";
  const bool temperature = study.larvae.temperature_effect == "auto" &&
                           field.has_scalar(currents::ScalarKind::temperature);
  const bool food = study.larvae.food_effect == "auto" && field.has_scalar(currents::ScalarKind::chlorophyll);
  if (temperature) field.enable_scalar(currents::ScalarKind::temperature);
  if (food) field.enable_scalar(currents::ScalarKind::chlorophyll);
  x.environment = LarvalEnvironment(study.larvae, temperature, food);
  if (temperature) describe += " temperature-dependent development;";
  if (food) describe += " food-dependent completion;";
  return x;
}

bool needs_extras(const study::Study& study) {
  const auto& m = study.motion;
  return m.depth != "fixed" || !m.depth_by_age.empty() || m.kh_from != "constant" ||
         study.larvae.temperature_effect == "auto" || study.larvae.food_effect == "auto";
}

// Waits for the currents' background decoder when a run ends, also when an
// error leaves it: other NetCDF work (settlement file, tracks) must not meet
// it (the library is not thread-safe).
struct SettleOnExit {
  currents::CurrentField& field;
  ~SettleOnExit() { field.settle(); }
};

}  // namespace

void check_time_coverage(const study::Study& study, const currents::CurrentField& field) {
  const currents::Calendar& calendar = field.calendar();
  for (std::size_t e = 0; e < study.spawning.size(); ++e) {
    const auto& event = study.spawning[e];
    double start = 0;
    try {
      start = calendar.to_seconds(event.start);
    } catch (const std::invalid_argument& error) {
      throw InputError(study.scenario_file.string() + ": [[spawning]] " + std::to_string(e + 1) +
                       " start: " + error.what() + " in the currents' calendar (" +
                       calendar.name() + ")");
    }
    const double end = start + event_length_s(event, study.larvae);
    if (start < field.time_begin_s() || end > field.time_end_s()) {
      throw InputError(
          study.scenario_file.string() + ": [[spawning]] " + std::to_string(e + 1) + " (" +
          event.label + ") needs currents from " + describe_time(calendar, start) + " to " +
          describe_time(calendar, end) + " (release window plus larval lifetime of " +
          std::to_string(study.larvae.precompetent_days + study.larvae.competent_days) +
          " days), but the currents files cover " + describe_time(calendar, field.time_begin_s()) +
          " to " + describe_time(calendar, field.time_end_s()));
    }
    // Larvae never drift through a hole in the record (e.g. between two
    // seasons' files): interpolating across it would invent the currents.
    if (const currents::TimeGap* gap = field.gap_within(start, end)) {
      throw InputError(
          study.scenario_file.string() + ": [[spawning]] " + std::to_string(e + 1) + " (" +
          event.label + ") needs currents from " + describe_time(calendar, start) + " to " +
          describe_time(calendar, end) + ", but the currents have a gap from " +
          describe_time(calendar, gap->from_s) + " to " + describe_time(calendar, gap->to_s) +
          " (no frames between; cullcast does not interpolate across a gap): move the spawning night, "
          "shorten the larval lifetime, or add the missing currents files");
    }
  }
}

DriftSummary run_drift(const study::Study& study, currents::CurrentField& field,
                       const reefs::ReefSet& reefs, const std::vector<reefs::ReleaseSource>& sources,
                       const ProgressFn& progress, const DriftShare& share,
                       const CheckpointSettings& checkpoint) {
  check_time_coverage(study, field);
  if (!share.batches.empty() && share.batches.size() != study.spawning.size()) {
    throw std::invalid_argument("run_drift: a share of " + std::to_string(share.batches.size()) +
                                " events for a study of " + std::to_string(study.spawning.size()));
  }
  if (!share.batches.empty() && study.tracks.enabled) {
    throw InputError(study.scenario_file.string() +
                     ": [tracks] is written by single-process runs only; run without mpirun "
                     "(or with -np 1), or switch [tracks] off");
  }
  DriftSummary summary;
  bool grid_ran = false;  // some event took the grid stepper (and its read-ahead side job)
  const auto& calendar = field.calendar();
  const LarvalClock clock(study.larvae);
  const EarthModel earth = EarthModel::from_name(study.motion.earth, study.motion.earth_radius_m);
  const reefs::ReefLookup lookup(reefs, study.reefs.settle_buffer_m);
  const CounterRandom rng(study.study.seed);

  StepSettings step{};
  step.dt_s = study.motion.dt_minutes * 60.0;
  step.kh_m2_s = study.motion.kh_m2_s;
  step.scheme = scheme_from_name(study.motion.scheme);
  step.land = study.motion.land == "strand" ? LandRule::strand : LandRule::hold;
  FieldSources field_sources;
  std::string physics;
  const StepExtras<FieldSources> extras = make_extras(study, field, field_sources, physics);
  // The core path (2-D, constant Kh) unless some optional physics is really on.
  const bool use_extras = needs_extras(study) &&
                          (extras.depth.moves() || extras.kh_varies() || extras.environment.any());
  summary.physics = use_extras ? physics : " 2-D, constant Kh";

  summary.records_netcdf = study.outputs.dir / "settlement.nc";
  if (study.outputs.settlement_csv) summary.records_csv = study.outputs.dir / "settlement.csv";
  std::optional<SettlementLog> log;
  auto open_log = [&] {
    if (!share.write_outputs) return;
    log.emplace(summary.records_netcdf, summary.records_csv, tables_for(study, field, reefs, sources));
  };
  if (share.write_outputs) fs::create_directories(study.outputs.dir);
  // Records go straight to the log unless an exchange merges them first; then
  // the log opens only once this process's drift is done (a process that
  // fails earlier leaves not even temporary files).
  const bool streaming = !share.exchange;
  if (streaming) open_log();
  std::unique_ptr<TrackWriter> tracks;
  if (study.tracks.enabled) {
    summary.tracks_netcdf = study.outputs.dir / "tracks.nc";
    std::vector<std::string> ids;
    for (const auto& src : sources) ids.push_back(src.id);
    tracks = std::make_unique<TrackWriter>(summary.tracks_netcdf, ids, field.calendar(),
                                           study.tracks.every_particle, study.tracks.every_steps,
                                           tables_for(study, field, reefs, sources).attributes);
  }

  // Writes one event's (merged) outcome and adds it to the summary.
  auto finish_event = [&](std::size_t e, const EventOutcome& out, double seconds) {
    const auto& event = study.spawning[e];
    if (out.fates.size() != sources.size()) {
      throw std::logic_error("run_drift: an exchange left fates of " + std::to_string(out.fates.size()) +
                             " sources, expected " + std::to_string(sources.size()));
    }
    std::int64_t released_here = 0;
    for (const auto& f : out.fates) released_here += f.released;
    if (released_here > 0 && out.off_water == static_cast<std::uint64_t>(released_here)) {
      no_release_over_water(event.label, out.off_water, nullptr, field.grid(), study);
    }
    if (out.off_water > 0) {
      std::ostringstream w;
      w << event.label << ": " << out.off_water << " of " << released_here
        << " release points lie on land or outside the currents grid (they cannot move)";
      summary.warnings.push_back(w.str());
    }
    if (log && !streaming) {
      for (const auto& r : out.records) log->add(r);
    }
    EventSummary es;
    es.label = event.label;
    es.particle_steps = out.particle_steps;
    es.seconds = seconds;
    summary.land_contacts += out.land_contacts;
    const double spacing = field.grid().min_spacing_m;
    if (spacing > 0) {
      summary.max_courant = std::max(summary.max_courant, out.max_speed_m_s * step.dt_s / spacing);
    }
    for (std::size_t s = 0; s < sources.size(); ++s) {
      if (log) log->set_fates(static_cast<std::uint32_t>(e), static_cast<std::uint32_t>(s), out.fates[s]);
      FateCounts& c = es.fates;
      c.released += out.fates[s].released;
      c.settled += out.fates[s].settled;
      c.died += out.fates[s].died;
      c.stranded += out.fates[s].stranded;
      c.lost += out.fates[s].lost;
      c.drifting += out.fates[s].drifting;
      c.settled_weight += out.fates[s].settled_weight;
    }
    summary.particle_steps += es.particle_steps;
    FateCounts& t = summary.totals;
    t.released += es.fates.released;
    t.settled += es.fates.settled;
    t.died += es.fates.died;
    t.stranded += es.fates.stranded;
    t.lost += es.fates.lost;
    t.drifting += es.fates.drifting;
    if (es.fates.drifting > 0) {
      std::ostringstream w;
      w << event.label << ": " << es.fates.drifting
        << " larvae were still drifting when the stepping ended (currents end at "
        << describe_time(calendar, field.stretch_end_s(calendar.to_seconds(event.start)))
        << (field.stretch_end_s(calendar.to_seconds(event.start)) < field.time_end_s() ? ", before a gap" : "")
        << "); their fate is unknown";
      summary.warnings.push_back(w.str());
    }
    t.settled_weight += es.fates.settled_weight;
    summary.events.push_back(es);
  };

  // Checkpoints (checkpoint.hpp), single-process runs only: the records so
  // far and the finished events are kept so a checkpoint can hold them; not
  // with tracks (the track file cannot be continued).
  const bool single = share.batches.empty() && !share.exchange;
  if (checkpoint.resume && !single) {
    throw InputError(checkpoint.file.string() + ": --resume continues single-process runs only; run it without mpirun");
  }
  const bool checkpointing = !checkpoint.file.empty() && !tracks && single;
  const std::uint64_t fingerprint = checkpointing || checkpoint.resume ? study_fingerprint(study) : 0;
  std::vector<SettlementRecord> records_so_far;
  std::vector<FinishedEvent> finished;
  std::optional<DriftCheckpoint> resumed;
  std::size_t first_event = 0;
  if (checkpoint.resume) {
    if (tracks) {
      throw InputError(study.scenario_file.string() + ": [tracks] is on; a run that writes tracks cannot be " +
                       "resumed (run again without --resume)");
    }
    resumed = read_checkpoint(checkpoint.file, fingerprint);
    if (resumed->event >= study.spawning.size() || resumed->finished.size() != resumed->event) {
      throw InputError(checkpoint.file.string() + ": drift checkpoint is for event " +
                       std::to_string(resumed->event + 1) + " but the scenario has " +
                       std::to_string(study.spawning.size()));
    }
    for (const auto& r : resumed->records) {
      if (log) log->add(r);
    }
    if (checkpointing) records_so_far = resumed->records;
    for (std::size_t e = 0; e < resumed->finished.size(); ++e) {
      const FinishedEvent& f = resumed->finished[e];
      EventOutcome done;
      done.fates = f.fates;
      done.particle_steps = f.particle_steps;
      done.land_contacts = f.land_contacts;
      done.off_water = f.off_water;
      done.max_speed_m_s = f.max_speed_m_s;
      finish_event(e, done, 0.0);
      if (checkpointing) finished.push_back(f);
    }
    first_event = resumed->event;
  }
  GridStepper grid_stepper(field, earth);
  auto last_checkpoint = Clock::now();
  const SettleOnExit settle_on_exit{field};

  const auto stage_start = Clock::now();
  std::uint64_t stepped = 0;               // particle-steps of this process before this event
  std::vector<EventOutcome> held;          // with an exchange: outcomes until every event is drifted
  std::vector<double> held_seconds;
  std::vector<std::uint8_t> settled_now;
  // This process's static batches event by event; then, with a queue, each
  // chunk it is handed (an event's batches again, drifted on their own).
  std::size_t next_event = first_event;
  std::optional<QueuedChunk> chunk;
  while (true) {
    chunk.reset();
    if (next_event >= study.spawning.size()) {
      if (streaming || !share.next_chunk || !(chunk = share.next_chunk())) break;
      if (chunk->event >= study.spawning.size()) {
        throw std::logic_error("run_drift: a queued chunk of event " + std::to_string(chunk->event + 1) +
                               " for a study of " + std::to_string(study.spawning.size()));
      }
    }
    const std::size_t e = chunk ? chunk->event : next_event++;
    const auto& event = study.spawning[e];
    const auto event_start = Clock::now();
    step.event = static_cast<std::uint32_t>(e);
    step.event_start_s = calendar.to_seconds(event.start);
    EventOutcome out;
    out.fates.assign(sources.size(), FateCounts{});
    const std::vector<std::uint32_t> mine = chunk ? chunk->sources : share.sources_of(e, sources.size());
    if (mine.empty()) {  // nothing of this event here: no currents read for it
      if (chunk) {
        // an empty chunk adds nothing
      } else if (streaming) {
        finish_event(e, out, 0);
      } else {
        held.push_back(std::move(out));
        held_seconds.push_back(0);
      }
      continue;
    }
    const bool resuming_this = resumed && e == resumed->event;
    ParticleSet p;
    if (resuming_this) {  // the state saved at a step boundary, with its counters
      p = std::move(resumed->particles);
      out.particle_steps = resumed->current.particle_steps;
      out.land_contacts = resumed->current.land_contacts;
      out.off_water = resumed->current.off_water;
      out.max_speed_m_s = resumed->current.max_speed_m_s;
    } else {
      p = particles_from(reefs::plan_release(reefs, sources, event, step.event, study.reefs, study.study.seed, mine));
      if (extras.environment.any()) p.enable_development();
      for (std::size_t i = 0; i < p.size(); ++i) {
        if (field.status(p.lon[i], p.lat[i]) != currents::SampleStatus::water) ++out.off_water;
      }
      // All of this event here, none of it over water: stop before drifting
      // (shared events are checked once merged, in finish_event).
      if (mine.size() == sources.size() && p.size() > 0 && out.off_water == p.size()) {
        no_release_over_water(event.label, p.size(), &p, field.grid(), study);
      }
    }
    if (tracks) tracks->begin_event(step.event, p);

    // The nominal lifetime; with temperature-dependent development larvae in
    // cool water live longer in calendar time, so stepping continues until
    // every particle has its fate or the currents end.
    auto steps = static_cast<std::uint32_t>(std::ceil(event_length_s(event, study.larvae) / step.dt_s - 1e-9));
    if (extras.environment.any()) {
      const double room = field.stretch_end_s(step.event_start_s) - step.event_start_s;  // up to a gap
      steps = std::max(steps, static_cast<std::uint32_t>(std::floor(room / step.dt_s + 1e-9)));
    }
    // The core path on a uniform regular grid has a faster stepper (grid_stepper.hpp).
    // The grid stepper also takes temperature/food effects (they act per
    // particle after the move); depth motion and varying Kh need the generic step.
    const bool grid_extras_free = !extras.depth.moves() && !extras.kh_varies();
    const bool on_grid = grid_extras_free && GridStepper::applies(field, p);
    if (on_grid) {
      grid_ran = true;
      summary.stepper = std::string("grid stepper, ") + GridStepper::isa_name(grid_stepper.instruction_set()) + " kernel";
    } else if (summary.stepper.empty()) {
      summary.stepper = "generic step";
    }
    std::uint64_t alive = 0, settled = 0, released = 0;
    std::uint32_t first_step = 0;
    if (resuming_this) {
      alive = resumed->alive;
      settled = resumed->settled;
      released = resumed->released;
      first_step = resumed->next_step;
    }
    auto last_report = Clock::now();
    // The next frames, decoded by one of the step's threads (when no
    // processor is spare for the field's background decoder).
    const std::function<void()> read_ahead = [&field] { field.read_pending(); };
    for (std::uint32_t k = first_step; k < steps; ++k) {
      const double t0 = step.event_start_s + k * step.dt_s;
      field.prepare(t0, t0 + step.dt_s);
      const StepTally tally =
          on_grid      ? grid_stepper.step(p, k, step, clock, lookup, rng, settled_now, extras.environment, read_ahead)
          : use_extras ? drift_step(p, k, step, clock, earth, field, lookup, rng, settled_now, extras)
                       : drift_step(p, k, step, clock, earth, field, lookup, rng, settled_now);
      if (tracks) tracks->after_step(k, t0 + step.dt_s, step.event_start_s, p);
      if (share.poll) share.poll();
      out.particle_steps += tally.particle_steps;
      out.land_contacts += tally.land_contacts;
      out.max_speed_m_s = std::max(out.max_speed_m_s, tally.max_speed_m_s);
      alive += tally.released;
      released += tally.released;
      alive -= tally.settled + tally.died + tally.stranded + tally.lost;
      settled += tally.settled;
      if (tally.settled > 0) {
        for (std::size_t i = 0; i < p.size(); ++i) {
          if (!settled_now[i]) continue;
          const double release = step.event_start_s + p.release_s[i];
          const double when = t0 + step.dt_s;
          const SettlementRecord record{step.event, p.source[i], p.reef[i], release,
                                        when,       when - release, p.weight[i]};
          if (streaming) {
            if (log) log->add(record);
            if (checkpointing) records_so_far.push_back(record);
          } else {
            out.records.push_back(record);
            out.record_keys.push_back((std::uint64_t{k} << 32) | p.index[i]);
          }
        }
      }
      if (progress && (seconds_since(last_report) > 0.25 || k + 1 == steps)) {
        last_report = Clock::now();
        DriftProgress dp;
        dp.event_index = e;
        dp.event_count = study.spawning.size();
        dp.event_label = event.label;
        dp.event_fraction = static_cast<double>(k + 1) / steps;
        dp.model_time_s = t0 + step.dt_s;
        dp.alive = alive;
        dp.settled = settled;
        dp.elapsed_s = seconds_since(stage_start);
        const double busy = seconds_since(stage_start);
        dp.particle_steps_per_s = busy > 0 ? (stepped + out.particle_steps) / busy : 0;
        progress(dp);
      }
      if (alive == 0 && released == p.size()) break;  // every particle has its final fate
      if (checkpointing && seconds_since(last_checkpoint) >= checkpoint.every_s && k + 1 < steps) {
        DriftCheckpoint c;
        c.fingerprint = fingerprint;
        c.event = step.event;
        c.next_step = k + 1;
        c.particles = p;
        c.alive = alive, c.settled = settled, c.released = released;
        c.current = {event.label, out.particle_steps, out.land_contacts, out.off_water, out.max_speed_m_s, {}};
        c.finished = finished;
        c.records = records_so_far;
        write_checkpoint(checkpoint.file, c);
        last_checkpoint = Clock::now();
      }
    }
    // Final fates per source.
    for (std::size_t i = 0; i < p.size(); ++i) {
      FateCounts& c = out.fates[p.source[i]];
      ++c.released;
      switch (p.fate[i]) {
        case Fate::settled: ++c.settled; c.settled_weight += p.weight[i]; break;
        case Fate::died: ++c.died; break;
        case Fate::stranded: ++c.stranded; break;
        case Fate::lost: ++c.lost; break;
        case Fate::waiting:
        case Fate::drifting: ++c.drifting; break;
      }
    }
    stepped += out.particle_steps;
    if (checkpointing) {
      finished.push_back({event.label, out.particle_steps, out.land_contacts, out.off_water, out.max_speed_m_s, out.fates});
    }
    if (streaming) {
      finish_event(e, out, seconds_since(event_start));
    } else if (chunk) {  // every event has its outcome held by now
      merge_outcome(held.at(e), out);
      held_seconds.at(e) += seconds_since(event_start);
    } else {
      held.push_back(std::move(out));
      held_seconds.push_back(seconds_since(event_start));
    }
  }
  field.settle();
  if (!streaming) {
    open_log();
    for (std::size_t e = 0; e < held.size(); ++e) {
      share.exchange(static_cast<std::uint32_t>(e), held[e]);
      finish_event(e, held[e], held_seconds[e]);
      held[e] = EventOutcome{};  // free the records
    }
  }
  summary.seconds = seconds_since(stage_start);
  summary.particle_steps_per_s =
      summary.seconds > 0 ? static_cast<double>(summary.particle_steps) / summary.seconds : 0;
  if (summary.max_courant > 1.0) {
    std::ostringstream w;
    w << "the time step of " << study.motion.dt_minutes << " min moves particles up to "
      << summary.max_courant << " grid cells per step (Courant number > 1); consider dt_minutes <= "
      << study.motion.dt_minutes / summary.max_courant;
    summary.warnings.push_back(w.str());
  }
  if (log) {
    log->commit();
    summary.records = log->records_written();
  }
  if (!checkpoint.file.empty() && single) {
    std::error_code ignored;  // finished: the checkpoint has served
    fs::remove(checkpoint.file, ignored);
  }
  if (tracks) {
    tracks->commit();
    summary.track_samples = tracks->samples();
    summary.track_count = tracks->trajectories();
  }
  // Who decoded the next currents frames while the larvae moved, if anyone.
  if (field.background_reads()) {
    summary.stepper += "; next frames decoded on a spare processor";
  } else if (grid_ran && omp_get_max_threads() > 1) {
    summary.stepper += "; next frames decoded by one of the step's threads";
  }
  return summary;
}

fs::path run_backward(const study::Study& study, currents::CurrentField& field,
                      const reefs::ReefSet& reefs) {
  const auto& b = study.backward;
  int sink = -1;
  for (std::size_t r = 0; r < reefs.reefs().size(); ++r) {
    if (reefs.reefs()[r].id == b.sink) sink = static_cast<int>(r);
  }
  if (sink < 0) {
    throw InputError(study.scenario_file.string() + ": [backward] sink: no reef with id \"" + b.sink +
                     "\" in " + study.reefs.layer.string());
  }
  const auto& calendar = field.calendar();
  const double arrival = calendar.to_seconds(b.arrival) + b.hours * 3600.0;  // last arrival
  const double span = b.hours * 3600.0 + (study.larvae.precompetent_days + study.larvae.competent_days) * 86400.0;
  if (arrival > field.time_end_s() || arrival - span < field.time_begin_s() ||
      field.gap_within(arrival - span, arrival) != nullptr) {
    throw InputError(study.scenario_file.string() + ": [backward] needs currents from " +
                     describe_time(calendar, arrival - span) + " to " + describe_time(calendar, arrival) +
                     " without a gap, but the currents files cover " + describe_time(calendar, field.time_begin_s()) +
                     " to " + describe_time(calendar, field.time_end_s()) +
                     (field.gaps().empty() ? std::string()
                                           : " with " + std::to_string(field.gaps().size()) +
                                                 " gap(s); cullcast hydro-check lists them"));
  }
  // Release on the sink: the reef's own release plan, one source.
  std::vector<reefs::ReleaseSource> sources;
  for (const auto& src : reefs::release_sources(reefs, study)) {
    if (src.reef_index == sink && src.kind == reefs::SourceKind::reef) sources.push_back(src);
  }
  if (sources.empty()) throw InputError("[backward] sink " + b.sink + ": no release source on this reef");
  study::SpawningEvent event;
  event.label = "backward from " + b.sink;
  event.start = b.arrival;
  event.larvae_per_reef = b.larvae;
  event.depth_m = b.depth_m;
  event.hours = b.hours;  // arrivals spread over the window, as releases are forwards
  ParticleSet p = particles_from(reefs::plan_release(reefs, sources, event, 0xFFFFu, study.reefs, study.study.seed));
  const LarvalClock clock(study.larvae);
  const EarthModel earth = EarthModel::from_name(study.motion.earth, study.motion.earth_radius_m);
  const reefs::ReefLookup lookup(reefs, study.reefs.settle_buffer_m);
  const CounterRandom rng(study.study.seed);
  const double dt = study.motion.dt_minutes * 60.0;
  // The forward run's optional physics, as far as it has a backward meaning
  // (backward_drift.hpp): varying Kh, depth band / 3-D, temperature.
  if (!study.motion.depth_by_age.empty()) {
    throw InputError(study.scenario_file.string() + ": [backward] cannot follow [motion] depth_by_age (the age " +
                     "of a larva along a backward path is unknown); run the backward drift from a scenario without " +
                     "depth_by_age");
  }
  FieldSources field_sources;
  std::string physics;
  const StepExtras<FieldSources> extras = make_extras(study, field, field_sources, physics);
  const bool use_extras = needs_extras(study) &&
                          (extras.depth.moves() || extras.kh_varies() || extras.environment.temperature_on());
  if (extras.environment.temperature_on()) p.enable_development();
  const Scheme scheme = scheme_from_name(study.motion.scheme);
  BackwardTally tally;
  tally.reef_weight.assign(reefs.reefs().size(), 0.0);
  // The run steps back from the last arrival. A particle arriving at
  // `arrival + offset` joins at the first step boundary at or before its
  // arrival (the mirror of a forward release); release_s then holds the
  // backward time at which it joined, and its own τ counts from there.
  const double window = b.hours * 3600.0;
  const double last = calendar.to_seconds(b.arrival) + window;
  std::vector<double> joins_after(p.size());  // backward seconds from `last` to the arrival
  for (std::size_t i = 0; i < p.size(); ++i) joins_after[i] = window - p.release_s[i];
  const auto steps = static_cast<std::uint32_t>(std::ceil((window + clock.max_age_s()) / dt - 1e-9));
  const SettleOnExit settle_on_exit{field};
  for (std::uint32_t k = 0; k < steps; ++k) {
    const double t0 = last - k * dt;
    for (std::size_t i = 0; i < p.size(); ++i) {
      if (p.fate[i] == Fate::waiting && joins_after[i] <= k * dt + 1e-6) {
        p.fate[i] = Fate::drifting;
        p.release_s[i] = static_cast<float>(k * dt);
      }
    }
    field.prepare(t0 - dt, t0);
    if (use_extras) {
      backward_step(p, k, t0, dt, study.motion.kh_m2_s, scheme, earth, field, rng, 0xFFFFu, tally, extras);
    } else {
      backward_step(p, k, t0, dt, study.motion.kh_m2_s, scheme, earth, field, rng, 0xFFFFu, tally);
    }
    add_origins(p, (k + 1) * dt, dt, clock, lookup, tally);
  }
  double total = 0;
  for (double w : tally.reef_weight) total += w;
  const fs::path out = study.outputs.dir / "backward_origins.csv";
  fs::create_directories(study.outputs.dir);
  AtomicFile file(out);
  auto& o = file.stream();
  o << "# backward drift from sink " << b.sink << " arriving " << format_iso8601(b.arrival) << " over "
    << b.hours << " h"
    << "; weight = sum of survival x seconds in the competency window; diffusion is not time-reversible\n";
  o << "reef_id,weight_s,share\n";
  o.precision(10);
  for (std::size_t r = 0; r < tally.reef_weight.size(); ++r) {
    if (tally.reef_weight[r] <= 0) continue;
    o << reefs.reefs()[r].id << "," << tally.reef_weight[r] << "," << (total > 0 ? tally.reef_weight[r] / total : 0)
      << "\n";
  }
  file.commit();
  return out;
}

}  // namespace cullcast::drift
