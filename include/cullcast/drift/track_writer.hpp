#pragma once
// Particle tracks as CF Discrete Sampling Geometry trajectories (CF-1.13
// chapter 9 and appendix H.4.3, "contiguous ragged array"):
//   global  featureType = "trajectory", Conventions = "CF-1.13"
//   dimensions  trajectory, obs
//   trajectory(trajectory)   int, cf_role = "trajectory_id"
//   row_size(trajectory)     int, sample_dimension = "obs" (observations per trajectory)
//   event, source(trajectory), particle(trajectory), source_id(trajectory) string
//   time(obs)   seconds since 1970-01-01 00:00:00, calendar of the currents (CF-1.13 §4.4)
//   lon(obs), lat(obs)  degrees_east / degrees_north;  depth(obs) m, positive down
//   age(obs)    days, coordinates = "time lat lon depth"
// A subsample is kept: every k-th particle of each source, every m-th step.
// Samples are streamed to a scratch file beside the target (bounded memory)
// and sorted into contiguous trajectories at commit() in passes of bounded
// size; the NetCDF file appears atomically (cullcast::AtomicFile).
#include <cstdint>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "cullcast/currents/calendar.hpp"
#include "cullcast/drift/particles.hpp"

namespace cullcast::drift {

class TrackWriter {
 public:
  TrackWriter(std::filesystem::path target, std::vector<std::string> source_ids,
              currents::Calendar calendar, int every_particle, int every_steps,
              std::vector<std::pair<std::string, std::string>> attributes = {});
  TrackWriter(const TrackWriter&) = delete;
  TrackWriter& operator=(const TrackWriter&) = delete;
  ~TrackWriter() noexcept;

  // Registers the tracked particles of a new event (index % every_particle == 0).
  void begin_event(std::uint32_t event, const ParticleSet& p);
  // After step `step` (0-based) ending at model time t_end_s: records drifting
  // particles every m steps, and every tracked particle at the step it ends.
  void after_step(std::uint32_t step, double t_end_s, double event_start_s, const ParticleSet& p);
  std::uint64_t samples() const;
  std::size_t trajectories() const;
  void commit();  // writes the NetCDF file and moves it into place

  // Samples sorted per pass at commit (bounded memory; tests lower it).
  std::size_t samples_per_pass = std::size_t{1} << 21;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace cullcast::drift
