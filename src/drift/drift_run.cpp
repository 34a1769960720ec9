#include "cullcast/drift/drift_run.hpp"

#include <chrono>
#include <cmath>
#include <sstream>

#include "cullcast/base/error.hpp"
#include "cullcast/drift/drift_step.hpp"
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
  }
}

DriftSummary run_drift(const study::Study& study, currents::CurrentField& field,
                       const reefs::ReefSet& reefs, const std::vector<reefs::ReleaseSource>& sources,
                       const ProgressFn& progress) {
  check_time_coverage(study, field);
  DriftSummary summary;
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

  fs::create_directories(study.outputs.dir);
  summary.records_netcdf = study.outputs.dir / "settlement.nc";
  if (study.outputs.settlement_csv) summary.records_csv = study.outputs.dir / "settlement.csv";
  SettlementLog log(summary.records_netcdf, summary.records_csv,
                    tables_for(study, field, reefs, sources));

  const auto stage_start = Clock::now();
  std::vector<std::uint8_t> settled_now;
  for (std::size_t e = 0; e < study.spawning.size(); ++e) {
    const auto& event = study.spawning[e];
    const auto event_start = Clock::now();
    step.event = static_cast<std::uint32_t>(e);
    step.event_start_s = calendar.to_seconds(event.start);
    ParticleSet p = particles_from(reefs::plan_release(reefs, sources, event, step.event,
                                                       study.reefs, study.study.seed));
    std::uint64_t off_water = 0;
    for (std::size_t i = 0; i < p.size(); ++i) {
      if (field.status(p.lon[i], p.lat[i]) != currents::SampleStatus::water) ++off_water;
    }
    if (off_water > 0) {
      std::ostringstream w;
      w << event.label << ": " << off_water << " of " << p.size()
        << " release points lie on land or outside the currents grid (they cannot move)";
      summary.warnings.push_back(w.str());
    }

    const auto steps = static_cast<std::uint32_t>(std::ceil(event_length_s(event, study.larvae) / step.dt_s - 1e-9));
    EventSummary es;
    es.label = event.label;
    std::uint64_t alive = 0, settled = 0, released = 0;
    auto last_report = Clock::now();
    for (std::uint32_t k = 0; k < steps; ++k) {
      const double t0 = step.event_start_s + k * step.dt_s;
      field.prepare(t0, t0 + step.dt_s);
      const StepTally tally = drift_step(p, k, step, clock, earth, field, lookup, rng, settled_now);
      es.particle_steps += tally.particle_steps;
      summary.land_contacts += tally.land_contacts;
      const double spacing = field.grid().min_spacing_m;
      if (spacing > 0) {
        summary.max_courant = std::max(summary.max_courant, tally.max_speed_m_s * step.dt_s / spacing);
      }
      alive += tally.released;
      released += tally.released;
      alive -= tally.settled + tally.died + tally.stranded + tally.lost;
      settled += tally.settled;
      if (tally.settled > 0) {
        for (std::size_t i = 0; i < p.size(); ++i) {
          if (!settled_now[i]) continue;
          const double release = step.event_start_s + p.release_s[i];
          const double when = t0 + step.dt_s;
          log.add({step.event, p.source[i], p.reef[i], release, when, when - release, p.weight[i]});
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
        dp.particle_steps_per_s = busy > 0 ? (summary.particle_steps + es.particle_steps) / busy : 0;
        progress(dp);
      }
      if (alive == 0 && released == p.size()) break;  // every particle has its final fate
    }
    // Final fates per source.
    std::vector<FateCounts> per_source(sources.size());
    for (std::size_t i = 0; i < p.size(); ++i) {
      FateCounts& c = per_source[p.source[i]];
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
    for (std::size_t s = 0; s < sources.size(); ++s) {
      log.set_fates(step.event, static_cast<std::uint32_t>(s), per_source[s]);
      FateCounts& c = es.fates;
      c.released += per_source[s].released;
      c.settled += per_source[s].settled;
      c.died += per_source[s].died;
      c.stranded += per_source[s].stranded;
      c.lost += per_source[s].lost;
      c.drifting += per_source[s].drifting;
      c.settled_weight += per_source[s].settled_weight;
    }
    es.seconds = seconds_since(event_start);
    summary.particle_steps += es.particle_steps;
    FateCounts& t = summary.totals;
    t.released += es.fates.released;
    t.settled += es.fates.settled;
    t.died += es.fates.died;
    t.stranded += es.fates.stranded;
    t.lost += es.fates.lost;
    t.drifting += es.fates.drifting;
    t.settled_weight += es.fates.settled_weight;
    summary.events.push_back(es);
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
  log.commit();
  summary.records = log.records_written();
  return summary;
}

}  // namespace cullcast::drift
