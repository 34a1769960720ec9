// Chunk sizes after Hummel, Schonberg & Flynn 1992, "Factoring: a method for
// scheduling parallel loops" (batch_queue.hpp).
#include "cullcast/drift/batch_queue.hpp"

#include <algorithm>
#include <stdexcept>
#include <string>

namespace cullcast::drift {

std::size_t queue_start(const std::vector<ReleaseBatch>& batches, double static_fraction) {
  if (!(static_fraction >= 0.0 && static_fraction <= 1.0)) {
    throw std::invalid_argument("queue_start: static fraction " + std::to_string(static_fraction) +
                                " outside 0..1");
  }
  if (static_fraction >= 1.0) return batches.size();
  double total = 0;
  for (const auto& b : batches) total += b.cost();
  const double target = static_fraction * total;
  double before = 0;
  for (std::size_t i = 0; i < batches.size(); ++i) {
    if (before >= target) return i;
    before += batches[i].cost();
  }
  return batches.size();
}

BatchQueue::BatchQueue(std::vector<ReleaseBatch> batches, std::size_t first, std::size_t processes,
                       double min_chunk_cost)
    : batches_(std::move(batches)),
      next_(std::min(first, batches_.size())),
      processes_(std::max<std::size_t>(1, processes)),
      min_chunk_cost_(std::max(0.0, min_chunk_cost)) {
  after_.assign(batches_.size() + 1, 0.0);
  for (std::size_t i = batches_.size(); i-- > 0;) after_[i] = after_[i + 1] + batches_[i].cost();
}

double BatchQueue::cost_left() const { return after_[next_]; }

std::optional<std::pair<std::size_t, std::size_t>> BatchQueue::take() {
  if (next_ >= batches_.size()) return std::nullopt;
  const double target = std::max(cost_left() / (2.0 * static_cast<double>(processes_)), min_chunk_cost_);
  const std::size_t first = next_;
  std::size_t last = first + 1;  // at least one batch, whatever its cost
  while (last < batches_.size() && batches_[last].event == batches_[first].event &&
         after_[first] - after_[last + 1] <= target) {
    ++last;
  }
  next_ = last;
  return std::make_pair(first, last);
}

}  // namespace cullcast::drift
