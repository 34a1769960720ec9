#pragma once
// CONTRACT. Statistics of each link (source i -> sink j, same orientation as
// connectivity_matrix.hpp) across spawning events, plus its pooled sampling
// uncertainty. A link absent from an event counts as probability 0 there.
//   mean  = (1/E) sum_e P_ij^e
//   sd    = sample standard deviation (divisor E-1; 0 when E = 1)
//   cv    = sd / mean
//   min, max over events; quantiles by linear interpolation between order
//   statistics (Hyndman & Fan 1996, Am. Stat. 50:361-365, definition 7).
//   Pooled: settled_i j = sum_e settled, released_i = sum_e released,
//   p_pool = settled / released, with its Wilson (1927) score interval.
#include <cstdint>
#include <vector>

#include "cullcast/network/connectivity_matrix.hpp"

namespace cullcast::network {

struct LinkStats {
  std::uint32_t source = 0, sink = 0;
  double mean = 0, sd = 0, cv = 0, min = 0, max = 0;  // probability (cv dimensionless)
  std::vector<double> quantiles;                       // at Ensemble::quantile_levels
  std::int64_t released = 0;  // particles from the source, all events
  double count = 0;           // settling particles, all events
  double settled = 0;         // larvae represented, all events
  double pooled = 0;          // settled / released
  double wilson_low = 0, wilson_high = 0;
};

struct Ensemble {
  std::vector<double> quantile_levels;
  std::vector<LinkStats> links;  // every link non-zero in some event, by (source, sink)
  SparseMatrix mean;             // sources x sinks
  SparseMatrix sd;               // sources x sinks
};

Ensemble link_ensemble(const Connectivity& c, const std::vector<double>& quantile_levels,
                       double confidence);

// Mean across events of any per-event matrices of equal shape.
SparseMatrix mean_matrix(const std::vector<SparseMatrix>& per_event);

// Quantile of sorted values at level q in [0,1] (Hyndman & Fan definition 7).
double quantile_sorted(const std::vector<double>& sorted, double q);

}  // namespace cullcast::network
