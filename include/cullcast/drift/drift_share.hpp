#pragma once
// A drift run shared between processes (the MPI driver, docs/scaling.md): the
// release batches (spawning event x source) and their split by estimated
// cost, which batches one process drifts, and the per-event outcome each
// process hands back so that the merged result is the single-process result,
// record for record. No MPI here: the split and the merge are plain functions.
//
// Why the shared run equals the single-process run: every random draw of a
// larva is keyed by (seed, event, source, particle, step) (base/random.hpp),
// its release point too (reefs/release_plan.hpp), and larvae do not interact;
// so a larva drifts the same wherever it is stepped.
#include <cstddef>
#include <cstdint>
#include <functional>
#include <optional>
#include <vector>

#include "cullcast/drift/settlement_log.hpp"
#include "cullcast/study/study.hpp"

namespace cullcast::drift {

// One spawning event's larvae from one release source: the unit of sharing.
struct ReleaseBatch {
  std::uint32_t event = 0;
  std::uint32_t source = 0;
  std::uint64_t particles = 0;  // simulated larvae
  std::uint64_t steps = 0;      // time steps of the nominal lifetime (release window + larval life)
  double cost() const { return static_cast<double>(particles) * static_cast<double>(steps); }  // particle-steps
};

// Every batch of a study, events in order and sources in order within each.
std::vector<ReleaseBatch> list_batches(const study::Study& study, std::size_t source_count);

// Cuts `batches`, kept in their order, into `parts` contiguous runs of nearly
// equal cost: boundary k is the batch boundary nearest to k/parts of the
// total cost, so each part's cost is within one batch's cost of total/parts.
// Contiguous rather than largest-first: a part then covers few spawning events
// (a process reads the currents of those events only) and neighbouring
// sources (their larvae meet the same parts of the grid). Returns parts + 1
// indices into `batches`: part k is [cuts[k], cuts[k+1]); a part may be empty
// when there are fewer batches than parts.
std::vector<std::size_t> split_by_cost(const std::vector<ReleaseBatch>& batches, std::size_t parts);

// The results of one spawning event from the batches one process drifted.
struct EventOutcome {
  // Settlement records in the order the stepping produced them: by step, then
  // by source, then by particle (the order of the release plan).
  std::vector<SettlementRecord> records;
  std::vector<std::uint64_t> record_keys;  // per record: (step << 32) | particle index within its source
  std::vector<FateCounts> fates;           // per source of the study; zero where not drifted here
  std::uint64_t particle_steps = 0;
  std::uint64_t land_contacts = 0;         // steps held back from land
  std::uint64_t off_water = 0;             // release points on land or off the grid
  double max_speed_m_s = 0;                // largest current speed met
};

// Adds another process's outcome of the same event to `into`, keeping the
// single-process record order. Throws std::logic_error if both hold a record
// of the same larva (the batches overlapped) or the source counts differ.
void merge_outcome(EventOutcome& into, const EventOutcome& other);

// Batches of one event handed to this process by a queue (batch_queue.hpp).
struct QueuedChunk {
  std::uint32_t event = 0;
  std::vector<std::uint32_t> sources;  // ascending
};

// Which batches this process drifts, and how its results meet the others'.
struct DriftShare {
  // batches[event][source] != 0: drifted here. Empty: every batch (one process).
  std::vector<std::vector<std::uint8_t>> batches;
  // When set, run_drift holds each event's outcome until every event is
  // drifted, then calls this once per event, in event order, on every
  // process; it may merge the other processes' outcomes into the one given.
  std::function<void(std::uint32_t event, EventOutcome& outcome)> exchange;
  // False: write no settlement log and create no output folder (helper processes).
  bool write_outputs = true;
  // With an exchange only. When set, run_drift asks it for more batches once
  // the static `batches` are drifted, and again after each chunk, until it
  // returns nothing; each chunk is drifted on its own and merged into its
  // event's outcome (merge_outcome), so the batches may come in any grouping.
  std::function<std::optional<QueuedChunk>()> next_chunk;
  // When set, called between time steps (lets the queue's owner answer
  // other processes' requests while it drifts).
  std::function<void()> poll;

  // This process's batches [first, last) of `all`.
  static DriftShare of(const std::vector<ReleaseBatch>& all, std::size_t first, std::size_t last,
                       std::size_t event_count, std::size_t source_count);
  // Sources of `event` drifted here, ascending.
  std::vector<std::uint32_t> sources_of(std::size_t event, std::size_t source_count) const;
};

}  // namespace cullcast::drift
