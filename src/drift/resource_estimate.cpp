#include "cullcast/drift/resource_estimate.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>
#include <stdexcept>

#include "cullcast/base/byte_size.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/drift/particles.hpp"

namespace cullcast::drift {
namespace {

constexpr std::uint64_t kFloat = sizeof(float), kDouble = sizeof(double);
// settlement.nc per record: event, source, reef (int32); release_time,
// settle_time, age, weight (double) -- settlement_log.cpp. Compression and
// the NetCDF-4 chunk overhead are ignored: the bound stays an upper bound
// for the data, close enough for the header.
constexpr std::uint64_t kRecordNetcdf = 3 * 4 + 4 * 8;
// settlement.csv per record besides the labels and ids: two ISO 8601 times
// of up to 24 characters, two numbers printed with 10 significant digits
// (up to 17 characters with sign, point and exponent), 7 separators.
constexpr std::uint64_t kRecordCsvFixed = 2 * 24 + 2 * 17 + 7;
// tracks.nc per sample: time, lon, lat (double), depth, age (float); every
// sample is first written to a scratch file and then sorted into the target.
constexpr std::uint64_t kTrackSample = 3 * 8 + 2 * 4;
constexpr std::uint64_t kTrackTrajectory = 5 * 4;  // trajectory, row_size, event, source, particle
// The program besides particles and frames: libraries, reef look-up raster,
// settlement buffer, NetCDF/HDF5 chunk caches. Measured, not derived: the demo
// study (scenarios/lantern-reach.toml, 2 threads) peaked at 117 MB resident
// with 5 MB of particles and frames (GNU time, maximum resident set size).
constexpr std::uint64_t kBaseline = std::uint64_t{128} << 20;

std::uint64_t longest(const std::vector<std::string>& texts) {
  std::uint64_t n = 0;
  for (const auto& t : texts) n = std::max<std::uint64_t>(n, t.size());
  return n;
}

std::string count_text(std::uint64_t n) {
  const std::string digits = std::to_string(n);
  std::string s;
  for (std::size_t i = 0; i < digits.size(); ++i) {
    if (i > 0 && (digits.size() - i) % 3 == 0) s += ',';
    s += digits[i];
  }
  return s;
}

}  // namespace

ResourceEstimate estimate_resources(const study::Study& study, const currents::CurrentField& field,
                                    const reefs::ReefSet& reefs,
                                    const std::vector<reefs::ReleaseSource>& sources) {
  ResourceEstimate e;
  const bool temperature = study.larvae.temperature_effect != "off" &&
                           field.has_scalar(currents::ScalarKind::temperature);
  const bool food = study.larvae.food_effect != "off" && field.has_scalar(currents::ScalarKind::chlorophyll);
  const bool environment = temperature || food;

  // Particles: the arrays of ParticleSet, the release plan they are filled
  // from (alive at the same time), one settled-now flag per particle, and the
  // development arrays when temperature or food act on the larvae, and the
  // walk deviates the grid stepper keeps for the next step.
  e.bytes_per_particle = ParticleSet::bytes_per_particle + sizeof(reefs::ReleasePoint) + 1 +
                         (environment ? 2 * kFloat : 0) +
                         (study.motion.kh_m2_s > 0 ? ParticleSet::walk_cache_bytes_per_particle : 0);
  const auto n_sources = static_cast<std::uint64_t>(sources.size());
  std::uint64_t all_particles = 0, trajectories = 0, samples = 0;
  for (const auto& event : study.spawning) {
    const auto per_source = static_cast<std::uint64_t>(std::max(0, event.larvae_per_reef));
    const std::uint64_t n = n_sources * per_source;
    e.particles = std::max(e.particles, n);
    all_particles += n;
    if (study.tracks.enabled) {
      const auto every_particle = static_cast<std::uint64_t>(std::max(1, study.tracks.every_particle));
      const auto every_steps = static_cast<std::uint64_t>(std::max(1, study.tracks.every_steps));
      const double dt_s = study.motion.dt_minutes * 60.0;
      double length_s = event.hours * 3600.0 + (study.larvae.precompetent_days + study.larvae.competent_days) * 86400.0;
      if (environment) {
        // Cool water slows development: stepping may go on to the end of the currents.
        try {
          length_s = std::max(length_s, field.time_end_s() - field.calendar().to_seconds(event.start));
        } catch (const std::invalid_argument&) {
          // A start the calendar lacks is refused by the drift's own checks, with context.
        }
      }
      const auto steps = static_cast<std::uint64_t>(std::ceil(std::max(0.0, length_s) / dt_s));
      const std::uint64_t tracked = n_sources * ((per_source + every_particle - 1) / every_particle);
      trajectories += tracked;
      samples += tracked * (steps / every_steps + 2);
    }
  }
  e.particle_bytes = e.particles * e.bytes_per_particle;

  // Current frames (current_field.cpp): the interval blocks from the one in
  // use to `frames_ahead` ahead, two spare blocks kept for reuse, decoded
  // frames (one; two while the background decoder works on the last
  // interval: counted both ways), and the double-precision buffers a frame is
  // read into.
  const auto& g = field.grid();
  e.grid_nodes = static_cast<std::uint64_t>(g.nx) * g.ny * std::max<std::size_t>(1, g.nz);
  const bool w = !field.variables().w.empty() && study.motion.depth == "3d";
  const std::uint64_t velocity = w ? 3 : 2;
  const std::uint64_t scalars = (temperature ? 1 : 0) + (food ? 1 : 0);
  const std::uint64_t block_per_node = (2 * velocity + 2 * scalars) * kFloat;
  e.frames_in_memory = static_cast<std::uint64_t>(std::max(0, study.currents.frames_ahead)) + 1 + 2;
  const std::uint64_t decoded_per_node = 2 * ((velocity + scalars) * kFloat + 1) + (velocity + scalars + 1) * kDouble;
  e.frame_bytes = e.grid_nodes * (e.frames_in_memory * block_per_node + decoded_per_node);
  e.baseline_bytes = kBaseline;
  e.memory_bytes = e.baseline_bytes + e.particle_bytes + e.frame_bytes;

  // Disk.
  e.records_max = all_particles;
  std::uint64_t per_record = kRecordNetcdf;
  if (study.outputs.settlement_csv) {
    std::vector<std::string> labels, source_ids, reef_ids;
    for (const auto& ev : study.spawning) labels.push_back(ev.label);
    for (const auto& s : sources) source_ids.push_back(s.id);
    for (const auto& r : reefs.reefs()) reef_ids.push_back(r.id);
    per_record += kRecordCsvFixed + longest(labels) + longest(source_ids) + longest(reef_ids);
  }
  e.settlement_bytes = e.records_max * per_record;
  e.track_bytes = study.tracks.enabled ? 2 * samples * kTrackSample + trajectories * kTrackTrajectory : 0;
  e.disk_bytes = e.settlement_bytes + e.track_bytes;
  return e;
}

void check_resources(const ResourceEstimate& e, const ResourceLimits& limits) {
  const bool over_limit = limits.memory_limit > 0 && e.memory_bytes > limits.memory_limit;
  if (over_limit || e.memory_bytes > limits.memory_available) {
    std::ostringstream m;
    m << "the drift needs about " << format_bytes(e.memory_bytes) << " of memory ("
      << format_bytes(e.particle_bytes) << " for " << count_text(e.particles)
      << " particles of the largest spawning event, " << e.bytes_per_particle << " bytes each; "
      << format_bytes(e.frame_bytes) << " for " << e.frames_in_memory << " blocks of current frames on "
      << count_text(e.grid_nodes) << " grid nodes; " << format_bytes(e.baseline_bytes)
      << " for the program itself) but ";
    if (over_limit) m << "--max-memory allows " << format_bytes(limits.memory_limit);
    else m << "only " << format_bytes(limits.memory_available) << " is available";
    m << ". Lower [[spawning]] larvae_per_reef, split the events into separate runs, set [currents] "
         "frames_ahead = 0, or cut the currents to the region";
    if (over_limit) m << ", or raise --max-memory";
    throw ResourceError(m.str());
  }
  if (e.disk_bytes > limits.disk_available) {
    std::ostringstream m;
    m << "the outputs may need up to " << format_bytes(e.disk_bytes) << " of disk in " << limits.outputs_dir
      << " (" << format_bytes(e.settlement_bytes) << " for at most " << count_text(e.records_max)
      << " settlement records";
    if (e.track_bytes > 0) m << ", " << format_bytes(e.track_bytes) << " for tracks";
    m << ") but only " << format_bytes(limits.disk_available)
      << " is free there. Free some space, set another [outputs] dir, or lower larvae_per_reef"
      << (e.track_bytes > 0 ? " or keep fewer tracks ([tracks] every_particle, every_steps)" : "");
    throw ResourceError(m.str());
  }
}

}  // namespace cullcast::drift
