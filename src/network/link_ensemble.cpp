// Ensemble statistics per link; quantiles after Hyndman & Fan (1996),
// Am. Stat. 50:361-365 (definition 7); intervals after Wilson (1927).
#include "cullcast/network/link_ensemble.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <stdexcept>

#include "cullcast/network/binomial_interval.hpp"

namespace cullcast::network {

double quantile_sorted(const std::vector<double>& sorted, double q) {
  if (sorted.empty()) throw std::invalid_argument("quantile of no values");
  const double h = (static_cast<double>(sorted.size()) - 1) * q;
  const auto lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min(lo + 1, sorted.size() - 1);
  return sorted[lo] + (h - static_cast<double>(lo)) * (sorted[hi] - sorted[lo]);
}

SparseMatrix mean_matrix(const std::vector<SparseMatrix>& per_event) {
  if (per_event.empty()) return {};
  SparseMatrix sum = per_event.front();
  for (std::size_t e = 1; e < per_event.size(); ++e) sum += per_event[e];
  sum *= 1.0 / static_cast<double>(per_event.size());
  return sum;
}

Ensemble link_ensemble(const Connectivity& c, const std::vector<double>& quantile_levels,
                       double confidence) {
  Ensemble out;
  out.quantile_levels = quantile_levels;
  const std::size_t ne = c.events.size();
  // Per link, its values in the events where it is non-zero, plus pooled sums.
  struct Acc {
    std::vector<double> values;
    double count = 0, settled = 0;
  };
  std::map<std::pair<std::uint32_t, std::uint32_t>, Acc> acc;
  for (std::size_t e = 0; e < ne; ++e) {
    const EventMatrices& m = c.events[e];
    for (Eigen::Index i = 0; i < m.probability.outerSize(); ++i) {
      SparseMatrix::InnerIterator p(m.probability, i), w(m.settled, i), n(m.count, i);
      for (; p; ++p, ++w, ++n) {
        Acc& a = acc[{static_cast<std::uint32_t>(i), static_cast<std::uint32_t>(p.col())}];
        a.values.push_back(p.value());
        a.settled += w.value();
        a.count += n.value();
      }
    }
  }
  std::vector<std::int64_t> released(c.sources(), 0);
  for (const auto& m : c.events) {
    for (std::size_t s = 0; s < c.sources(); ++s) released[s] += m.released[s];
  }
  std::vector<Eigen::Triplet<double>> tm, ts;
  out.links.reserve(acc.size());
  for (auto& [key, a] : acc) {
    LinkStats l;
    l.source = key.first;
    l.sink = key.second;
    std::vector<double> v = std::move(a.values);
    v.resize(ne, 0.0);  // absent in an event = 0
    std::sort(v.begin(), v.end());
    double sum = 0;
    for (double x : v) sum += x;
    l.mean = sum / static_cast<double>(ne);
    double ss = 0;
    for (double x : v) ss += (x - l.mean) * (x - l.mean);
    l.sd = ne > 1 ? std::sqrt(ss / static_cast<double>(ne - 1)) : 0.0;
    l.cv = l.mean > 0 ? l.sd / l.mean : 0.0;
    l.min = v.front();
    l.max = v.back();
    for (double q : quantile_levels) l.quantiles.push_back(quantile_sorted(v, q));
    l.released = released[l.source];
    l.count = a.count;
    l.settled = a.settled;
    l.pooled = l.released > 0 ? l.settled / static_cast<double>(l.released) : 0.0;
    const Interval ci = wilson_interval(l.settled, static_cast<double>(l.released), confidence);
    l.wilson_low = ci.low;
    l.wilson_high = ci.high;
    tm.emplace_back(l.source, l.sink, l.mean);
    ts.emplace_back(l.source, l.sink, l.sd);
    out.links.push_back(std::move(l));
  }
  const auto rows = static_cast<Eigen::Index>(c.sources());
  const auto cols = static_cast<Eigen::Index>(c.sinks());
  out.mean.resize(rows, cols);
  out.sd.resize(rows, cols);
  out.mean.setFromTriplets(tm.begin(), tm.end());
  out.sd.setFromTriplets(ts.begin(), ts.end());
  return out;
}

}  // namespace cullcast::network
