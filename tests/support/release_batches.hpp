#pragma once
// For the tests of sharing a drift between processes: lists of release
// batches with chosen sizes, and the cost of a run of them.
#include <cstddef>
#include <cstdint>
#include <vector>

#include "cullcast/drift/drift_share.hpp"

namespace cullcast::test {

// `per_event` sources per event, one batch per entry of `particles` (its
// larvae), 10 steps each.
inline std::vector<drift::ReleaseBatch> batches_of(const std::vector<std::uint64_t>& particles,
                                                   std::size_t per_event) {
  std::vector<drift::ReleaseBatch> out;
  for (std::size_t i = 0; i < particles.size(); ++i) {
    drift::ReleaseBatch b;
    b.event = static_cast<std::uint32_t>(i / per_event);
    b.source = static_cast<std::uint32_t>(i % per_event);
    b.particles = particles[i];
    b.steps = 10;
    out.push_back(b);
  }
  return out;
}

// Estimated cost (particle-steps) of batches [first, last).
inline double cost_of(const std::vector<drift::ReleaseBatch>& b, std::size_t first, std::size_t last) {
  double c = 0;
  for (std::size_t i = first; i < last; ++i) c += b[i].cost();
  return c;
}

}  // namespace cullcast::test
