#pragma once
// Memory and disk a drift run will need, estimated before it starts so that a
// study too big for the machine is refused at once instead of dying midway.
// Memory: the particles of the largest spawning event (they are the only
// per-run state; events run one after another), the current frames held in
// memory, and a fixed allowance for the program itself. Disk: an upper bound of the settlement records (each particle
// settles at most once) and of the tracks when [tracks] is on.
#include <cstdint>
#include <string>
#include <vector>

#include "cullcast/currents/current_field.hpp"
#include "cullcast/reefs/reef_set.hpp"
#include "cullcast/reefs/release_plan.hpp"
#include "cullcast/study/study.hpp"

namespace cullcast::drift {

struct ResourceEstimate {
  std::uint64_t particles = 0;            // particles of the largest event
  std::uint64_t bytes_per_particle = 0;   // particle arrays, release plan, step scratch, bytes
  std::uint64_t particle_bytes = 0;       // particles * bytes_per_particle
  std::uint64_t grid_nodes = 0;           // nx * ny * nz of the currents
  std::uint64_t frames_in_memory = 0;     // blocks kept by the frame streaming (read-ahead included)
  std::uint64_t frame_bytes = 0;          // memory of those frames and their decoding buffers, bytes
  std::uint64_t baseline_bytes = 0;       // the program itself: libraries, reef look-up, NetCDF caches
  std::uint64_t memory_bytes = 0;         // baseline_bytes + particle_bytes + frame_bytes
  std::uint64_t records_max = 0;          // settlement records, upper bound (all particles of all events)
  std::uint64_t settlement_bytes = 0;     // settlement.nc (+ settlement.csv), upper bound
  std::uint64_t track_bytes = 0;          // tracks.nc and its scratch file, upper bound; 0 without [tracks]
  std::uint64_t disk_bytes = 0;           // settlement_bytes + track_bytes
};

ResourceEstimate estimate_resources(const study::Study& study, const currents::CurrentField& field,
                                    const reefs::ReefSet& reefs,
                                    const std::vector<reefs::ReleaseSource>& sources);

struct ResourceLimits {
  std::uint64_t memory_available = 0;  // what the machine has (base/system_resources.hpp), bytes
  std::uint64_t memory_limit = 0;      // --max-memory, bytes; 0 = none
  std::uint64_t disk_available = 0;    // free space where the outputs go, bytes
  std::string outputs_dir;             // for messages
};

// Throws ResourceError, naming the estimate, its parts, the limit and what to
// change, when memory exceeds memory_limit (when set) or memory_available, or
// disk exceeds disk_available.
void check_resources(const ResourceEstimate& estimate, const ResourceLimits& limits);

}  // namespace cullcast::drift
