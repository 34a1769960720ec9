#pragma once
// Most-probable stepping-stone routes into chosen sink reefs: for every other
// reef, the path maximising the product of link probabilities (Dijkstra on
// edge length −ln p), with its probability and the reefs it passes.
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/network/network_graph.hpp"

namespace cullcast::network {

struct SteppingStoneRoute {
  int from = -1, to = -1;    // reef indices (row = source, column = sink orientation of P)
  double probability = 0;    // product of the link probabilities along the path
  std::vector<int> reefs;    // from ... to
};

// Routes from every reef to each reef in `sinks` (skipping from == to and
// unreachable pairs), ordered by sink, then by decreasing probability.
std::vector<SteppingStoneRoute> stepping_stone_routes(const SparseMatrix& p,
                                                      const std::vector<int>& sinks);

// stepping_stones.csv: source_id,sink_id,path_probability,stones,path
// (`stones` = reefs strictly between the two; `path` = ids joined by " > ").
void write_stepping_stones_csv(const std::filesystem::path& path,
                               const std::vector<std::string>& reef_ids,
                               const std::vector<SteppingStoneRoute>& routes);

}  // namespace cullcast::network
