// Botsford et al. (2009) Coral Reefs 28:327-337 (local retention,
// self-recruitment, settlement success); graph metrics in network_graph.cpp.
#include "cullcast/network/reef_metrics.hpp"

#include <limits>
#include <stdexcept>

#include "cullcast/network/network_graph.hpp"

namespace cullcast::network {

std::string reef_role(double e, double i) {
  if (!(e + i > 0)) return "isolated";
  if (e >= 2 * i) return "source";
  if (i >= 2 * e) return "sink";
  return "exchange";
}

std::vector<ReefMetrics> reef_metrics(const SparseMatrix& p, const std::vector<double>& output,
                                      const MetricOptions& options) {
  const std::size_t n = static_cast<std::size_t>(p.rows());
  if (p.rows() != p.cols() || output.size() != n) {
    throw std::invalid_argument("reef_metrics: need a square matrix and one output per reef");
  }
  std::vector<ReefMetrics> m(n);
  std::vector<double> arriving(n, 0.0), self(n, 0.0);  // larvae, units of L
  for (Eigen::Index i = 0; i < p.outerSize(); ++i) {
    for (SparseMatrix::InnerIterator it(p, i); it; ++it) {
      const auto j = static_cast<std::size_t>(it.col());
      const double larvae = output[i] * it.value();
      m[i].settlement_success += it.value();
      arriving[j] += larvae;
      if (j == static_cast<std::size_t>(i)) {
        m[i].local_retention = it.value();
        self[j] += larvae;
      } else {
        m[i].export_strength += larvae;
        m[j].import_strength += larvae;
      }
    }
  }
  const auto out_d = out_degree(p, options.threshold);
  const auto in_d = in_degree(p, options.threshold);
  const auto between = betweenness(p, options.threshold);
  const Components comp = strong_components(p, options.threshold);
  const auto reach = generation_reach(p, options.generations, options.threshold);
  for (std::size_t i = 0; i < n; ++i) {
    m[i].self_recruitment =
        arriving[i] > 0 ? self[i] / arriving[i] : std::numeric_limits<double>::quiet_NaN();
    m[i].out_degree = out_d[i];
    m[i].in_degree = in_d[i];
    m[i].betweenness = between[i];
    m[i].component = comp.component[i];
    m[i].component_size = comp.size[comp.component[i]];
    m[i].reach = reach[i];
    m[i].role = reef_role(m[i].export_strength, m[i].import_strength);
  }
  return m;
}

}  // namespace cullcast::network
