#pragma once
// The drift stage: for each spawning event, release larvae from every source,
// step them through the currents, stream settlement records to disk.
#include <cstdint>
#include <filesystem>
#include <functional>
#include <string>
#include <vector>

#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/checkpoint.hpp"
#include "cullcast/drift/drift_share.hpp"
#include "cullcast/drift/settlement_log.hpp"
#include "cullcast/reefs/reef_set.hpp"
#include "cullcast/reefs/release_plan.hpp"
#include "cullcast/study/study.hpp"

namespace cullcast::drift {

struct DriftProgress {
  std::size_t event_index = 0;   // 0-based
  std::size_t event_count = 0;
  std::string event_label;
  double event_fraction = 0;     // 0..1 of this event's steps
  double model_time_s = 0;       // simulation clock, model seconds
  std::uint64_t alive = 0;       // particles in the water
  std::uint64_t settled = 0;     // settled so far in this event
  double elapsed_s = 0;          // wall-clock seconds since the stage began
  double particle_steps_per_s = 0;
};

struct EventSummary {
  std::string label;
  FateCounts fates;
  std::uint64_t particle_steps = 0;
  double seconds = 0;
};

struct DriftSummary {
  std::vector<EventSummary> events;
  FateCounts totals;
  std::uint64_t particle_steps = 0;
  std::uint64_t land_contacts = 0;
  double seconds = 0;                 // wall-clock time of the stepping
  double particle_steps_per_s = 0;
  double max_courant = 0;             // largest |u|·dt/Δx met
  std::uint64_t records = 0;
  std::filesystem::path records_netcdf, records_csv;
  std::filesystem::path tracks_netcdf;   // empty without [tracks]
  std::uint64_t track_samples = 0;
  std::size_t track_count = 0;
  std::filesystem::path backward_csv;    // empty without [backward]
  std::string physics;                   // the optional physics in effect (for the summary)
  // Which step path ran (grid stepper with its kernel, or generic) and who
  // decoded the next currents frames meanwhile, if anyone.
  std::string stepper;
  std::vector<std::string> warnings;
};

using ProgressFn = std::function<void(const DriftProgress&)>;

// Checks that the currents cover every event's release window plus the larval
// lifetime; throws InputError naming the event and the span otherwise.
void check_time_coverage(const study::Study& study, const currents::CurrentField& field);

// `share` (drift_share.hpp): the batches this process drifts and how its
// results meet those of the other processes; by default every batch, written
// here. With a share, the summary counts what this process wrote (the merged
// run where write_outputs is true); [tracks] needs the whole run in one process.
// With `checkpoint.file` set (single-process runs), writes the state to it
// every `every_s` seconds of wall-clock time and removes it when done; with
// `checkpoint.resume`, continues from it (checkpoint.hpp). Results are
// bit-identical either way.
DriftSummary run_drift(const study::Study& study, currents::CurrentField& field,
                       const reefs::ReefSet& reefs, const std::vector<reefs::ReleaseSource>& sources,
                       const ProgressFn& progress = {}, const DriftShare& share = {},
                       const CheckpointSettings& checkpoint = {});

// Backward drift from [backward] sink (backward_drift.hpp): writes
// <outputs>/backward_origins.csv (reef_id, weight, share) and returns its path.
// Throws InputError when the sink is not a reef id or the currents do not
// reach back far enough.
std::filesystem::path run_backward(const study::Study& study, currents::CurrentField& field,
                                   const reefs::ReefSet& reefs);

}  // namespace cullcast::drift
