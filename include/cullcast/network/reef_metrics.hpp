#pragma once
// CONTRACT. Metrics per reef from a square reef-to-reef probability matrix P
// (row i = source reef, column j = sink reef) and the reefs' larval outputs L
// (an input, e.g. surveyed adults; equal outputs when unknown).
// Definitions: Botsford et al. (2009), "Connectivity and resilience of coral
// reef metapopulations in marine protected areas", Coral Reefs 28:327-337;
// Burgess et al. (2014), Ecol. Appl. 24:257-270.
//   local retention     LR_i = P_ii
//   self-recruitment    SR_i = L_i P_ii / sum_k L_k P_ki   (NaN when nothing settles on i)
//   settlement success  S_i  = sum_j P_ij
//   export strength     E_i  = sum_{j != i} L_i P_ij   (larvae, units of L)
//   import strength     I_i  = sum_{k != i} L_k P_ki   (larvae, units of L)
//   out/in degree, betweenness, strong components, k-generation reach:
//   network_graph.hpp, on links with P >= threshold.
// Role (this project's rule, common practice, no source):
//   "isolated" when E_i + I_i = 0, "source" when E_i >= 2 I_i,
//   "sink" when I_i >= 2 E_i, otherwise "exchange".
#include <string>
#include <vector>

#include "cullcast/network/connectivity_matrix.hpp"

namespace cullcast::network {

struct ReefMetrics {
  double local_retention = 0;     // dimensionless
  double self_recruitment = 0;    // dimensionless, NaN when no settlers
  double settlement_success = 0;  // dimensionless
  double export_strength = 0;     // larvae (units of L)
  double import_strength = 0;     // larvae (units of L)
  int out_degree = 0, in_degree = 0;
  double betweenness = 0;
  int component = 0, component_size = 0;
  int reach = 0;                  // k-generation reach
  std::string role;
};

struct MetricOptions {
  double threshold = 1e-3;  // link probability counted as an edge
  int generations = 3;      // k of the reach
};

std::vector<ReefMetrics> reef_metrics(const SparseMatrix& p, const std::vector<double>& output,
                                      const MetricOptions& options);

// The role rule above, on its own (tested separately).
std::string reef_role(double export_strength, double import_strength);

}  // namespace cullcast::network
