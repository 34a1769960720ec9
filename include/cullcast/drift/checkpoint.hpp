#pragma once
// Crash-safe long runs: the drift stage's state at a step boundary, written
// now and then to one file in the outputs folder (atomically: a crash while
// writing leaves the previous checkpoint), and read back by `--resume`.
// Because every random draw is a pure function of (seed, event, source,
// particle, step), continuing from a checkpoint gives results bit-identical
// to an uninterrupted run.
//
// File (binary, little-endian, private to cullcast, docs/formats.md
// "drift checkpoint"): a magic line and version, the study's fingerprint,
// the state below, and a 64-bit FNV-1a checksum of everything before it, so
// a truncated or foreign file is refused with a clear message.
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/drift/particles.hpp"
#include "cullcast/drift/settlement_log.hpp"
#include "cullcast/study/study.hpp"

namespace cullcast::drift {

struct CheckpointSettings {
  std::filesystem::path file;  // empty: no checkpoints
  double every_s = 300;        // wall-clock seconds between checkpoints
  bool resume = false;         // continue from `file`
};

// One spawning event's counters, as run_drift keeps them (finished events;
// and the event in progress, whose fates are still empty).
struct FinishedEvent {
  std::string label;
  std::uint64_t particle_steps = 0;
  std::uint64_t land_contacts = 0;
  std::uint64_t off_water = 0;    // release points not over water
  double max_speed_m_s = 0;       // largest current speed met (Courant check)
  std::vector<FateCounts> fates;  // per source
};

struct DriftCheckpoint {
  std::uint64_t fingerprint = 0;  // study_fingerprint() of the run that wrote it
  std::uint32_t event = 0;        // event in progress
  std::uint32_t next_step = 0;    // first step not yet run
  ParticleSet particles;          // that event's particles after step next_step - 1
  std::uint64_t alive = 0, settled = 0, released = 0;
  FinishedEvent current;          // counters of the event in progress
  std::vector<FinishedEvent> finished;
  std::vector<SettlementRecord> records;  // every record so far, in log order
};

// Identifies a study for resuming: the scenario file's bytes, the --set
// overrides, the currents files' names and sizes, and the program version.
std::uint64_t study_fingerprint(const study::Study& study);

// Written atomically (temporary file, then rename).
void write_checkpoint(const std::filesystem::path& file, const DriftCheckpoint& checkpoint);

// Throws InputError naming the file when it is missing, truncated, not a
// checkpoint, or from another study (fingerprint differs).
DriftCheckpoint read_checkpoint(const std::filesystem::path& file, std::uint64_t expected_fingerprint);

}  // namespace cullcast::drift
