#pragma once
// CONTRACT. Plain-words reasons for each recommended reef: which priority reefs
// its larvae reach, directly (share of its weighted flow to priority reefs,
// mean matrix) or through stepping-stone reefs (the most probable path on the
// mean reef-to-reef matrix, network/network_graph.hpp: Dijkstra on -ln P).
#include <string>
#include <vector>

#include "cullcast/cull/robustness.hpp"

namespace cullcast::cull {

struct PriorityLink {
  std::string priority_reef;
  double share = 0;                  // of this reef's weighted direct flow to priority reefs (0..1)
  double probability = 0;            // P (direct) or path probability (stepping stones)
  std::vector<std::string> path;     // reef ids from this reef to the priority reef
};

struct Explanation {
  std::string reef_id;
  std::vector<PriorityLink> direct;     // largest share first (at most 3)
  std::vector<PriorityLink> stepping;   // priority reefs reached only through other reefs (at most 3)
  std::string text;                     // one paragraph for a manager
};

// `reef_p`: mean reef-to-reef probability matrix (reefs x reefs).
std::vector<Explanation> explain(const CullModel& m, const Robustness& r, const SparseMatrix& reef_p);

}  // namespace cullcast::cull
