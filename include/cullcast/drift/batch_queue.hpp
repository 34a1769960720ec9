#pragma once
// The dynamic part of a shared drift (docs/scaling.md): the release batches
// after the static split, handed out in chunks to whichever process asks
// first. Chunk sizes follow "factoring" (Hummel, Schonberg & Flynn 1992,
// "Factoring: a method for scheduling parallel loops", Communications of the
// ACM 35(8)), a refinement of guided self-scheduling (Polychronopoulos & Kuck
// 1987, IEEE Transactions on Computers C-36(12)): each chunk is about the
// remaining cost / (2 x processes), so the first chunks are large (few
// requests) and the last ones small (the processes finish close together),
// but not below a floor: each chunk costs a process one more sweep over its
// event's currents frames, whatever the chunk's size (docs/scaling.md).
// No MPI here: the MPI driver (src/cli/distributed_drift.cpp) owns one queue
// on rank 0 and sends the chunks' index ranges.
#include <cstddef>
#include <optional>
#include <utility>
#include <vector>

#include "cullcast/drift/drift_share.hpp"

namespace cullcast::drift {

// The first batch of the queued tail: the smallest index whose preceding
// batches hold at least `static_fraction` (0..1) of the total estimated cost.
// 1 queues nothing (batches.size()), 0 queues every batch.
std::size_t queue_start(const std::vector<ReleaseBatch>& batches, double static_fraction);

class BatchQueue {
 public:
  // Hands out batches [first, batches.size()) of `batches` to `processes`
  // processes, in chunks of at least `min_chunk_cost` particle-steps where
  // the event has that much left. Keeps a copy of the list (a few bytes per
  // batch).
  BatchQueue(std::vector<ReleaseBatch> batches, std::size_t first, std::size_t processes,
             double min_chunk_cost = 0);

  // The next chunk [first, last) of batch indices: consecutive batches of one
  // spawning event, at least one, as many as fit in max(cost_left() /
  // (2 x processes), min_chunk_cost) of estimated cost; nothing once every
  // batch is handed out. In batch order, so a process that takes several
  // chunks moves forward in time.
  std::optional<std::pair<std::size_t, std::size_t>> take();

  std::size_t batches_left() const { return batches_.size() - next_; }
  double cost_left() const;  // estimated particle-steps not yet handed out

 private:
  std::vector<ReleaseBatch> batches_;
  std::vector<double> after_;  // after_[i]: cost of batches [i, end)
  std::size_t next_ = 0;
  std::size_t processes_ = 1;
  double min_chunk_cost_ = 0;
};

}  // namespace cullcast::drift
