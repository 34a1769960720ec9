// Bayes' rule over a connectivity column weighted by larval output.
#include "cullcast/network/source_attribution.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "cullcast/base/error.hpp"
#include "cullcast/network/link_ensemble.hpp"

namespace cullcast::network {
namespace {

// Shares of every source in column j of p, weighted by output; empty if none settled.
std::vector<double> column_shares(const SparseMatrix& p, int j, const std::vector<double>& output) {
  std::vector<double> share(static_cast<std::size_t>(p.rows()), 0.0);
  double total = 0;
  for (Eigen::Index i = 0; i < p.outerSize(); ++i) {
    const double v = p.coeff(i, j) * output[i];
    share[i] = v;
    total += v;
  }
  if (!(total > 0)) return {};
  for (double& s : share) s /= total;
  return share;
}

}  // namespace

Attribution attribute_sink(const Connectivity& c, const std::string& sink_id,
                           const std::vector<double>& output) {
  if (output.size() != c.sources()) {
    throw std::invalid_argument("attribute_sink: " + std::to_string(output.size()) +
                                " larval outputs for " + std::to_string(c.sources()) + " sources");
  }
  Attribution a;
  a.sink_id = sink_id;
  const auto reef = std::find(c.sink_ids.begin(), c.sink_ids.end(), sink_id);
  if (reef != c.sink_ids.end()) {
    a.sink = static_cast<int>(reef - c.sink_ids.begin());
  } else {
    const auto src = std::find(c.source_ids.begin(), c.source_ids.end(), sink_id);
    if (src == c.source_ids.end()) {
      throw InputError("[connectivity] attribute: \"" + sink_id +
                       "\" is neither a reef id nor an aggregation id of the settlement records");
    }
    a.sink = c.source_reefs[src - c.source_ids.begin()];
    if (a.sink < 0) {
      throw InputError("[connectivity] attribute: aggregation \"" + sink_id +
                       "\" lies on no reef, so no larvae can be counted as settling there");
    }
  }
  std::vector<SparseMatrix> per_event;
  for (const auto& m : c.events) per_event.push_back(m.probability);
  const std::vector<double> pooled = column_shares(mean_matrix(per_event), a.sink, output);
  std::vector<std::vector<double>> event_shares;
  for (const auto& m : per_event) {
    auto s = column_shares(m, a.sink, output);
    if (!s.empty()) event_shares.push_back(std::move(s));
  }
  a.events_with_settlers = static_cast<int>(event_shares.size());
  if (pooled.empty()) return a;
  for (std::size_t i = 0; i < pooled.size(); ++i) {
    if (!(pooled[i] > 0)) continue;
    OriginShare o;
    o.source = static_cast<int>(i);
    o.share = pooled[i];
    const double ne = static_cast<double>(event_shares.size());
    o.event_min = 1.0;
    o.event_max = 0.0;
    for (const auto& s : event_shares) {
      o.event_mean += s[i] / ne;
      o.event_min = std::min(o.event_min, s[i]);
      o.event_max = std::max(o.event_max, s[i]);
    }
    double ss = 0;
    for (const auto& s : event_shares) ss += (s[i] - o.event_mean) * (s[i] - o.event_mean);
    o.event_sd = event_shares.size() > 1 ? std::sqrt(ss / (ne - 1)) : 0.0;
    a.origins.push_back(o);
  }
  std::stable_sort(a.origins.begin(), a.origins.end(),
                   [](const OriginShare& x, const OriginShare& y) { return x.share > y.share; });
  return a;
}

}  // namespace cullcast::network
