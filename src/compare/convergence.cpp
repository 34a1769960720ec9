// Particle count for a target precision: Cochran (1977), Sampling Techniques,
// 3rd ed., the sample size for a proportion (formula in the header).
#include "cullcast/compare/convergence.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace cullcast::compare {

double normal_quantile(double q) {
  if (!(q > 0 && q < 1)) throw std::invalid_argument("normal_quantile: q must lie in (0, 1)");
  // Phi(x) = erfc(-x / sqrt 2) / 2 is increasing: bisect on [-40, 40].
  double lo = -40, hi = 40;
  for (int i = 0; i < 200 && hi - lo > 1e-15; ++i) {
    const double mid = 0.5 * (lo + hi);
    if (0.5 * std::erfc(-mid / std::sqrt(2.0)) < q) {
      lo = mid;
    } else {
      hi = mid;
    }
  }
  return 0.5 * (lo + hi);
}

std::int64_t particles_for_precision(double p, double r, double confidence) {
  if (!(p > 0 && p < 1) || !(r > 0) || !(confidence > 0 && confidence < 1)) {
    throw std::invalid_argument(
        "particles_for_precision: need 0 < p < 1, r > 0, 0 < confidence < 1");
  }
  const double z = normal_quantile(0.5 + confidence / 2);
  return static_cast<std::int64_t>(std::ceil(z * z * (1 - p) / (r * r * p) - 1e-9));
}

double relative_half_width(double p, std::int64_t n, double confidence) {
  const double z = normal_quantile(0.5 + confidence / 2);
  return z * std::sqrt((1 - p) / (static_cast<double>(n) * p));
}

ConvergenceReport assess_convergence(const RunComparison& c, const ConvergenceOptions& o) {
  ConvergenceReport r;
  for (const auto& l : c.links) {
    if (l.released_a <= 0 || l.released_b <= 0) continue;
    r.particles_b = std::max(r.particles_b, l.released_b);
    MovingLink m;
    m.source_id = l.source_id;
    m.sink_id = l.sink_id;
    m.fraction_a = static_cast<double>(l.settlers_a) / static_cast<double>(l.released_a);
    m.fraction_b = static_cast<double>(l.settlers_b) / static_cast<double>(l.released_b);
    if (std::max(m.fraction_a, m.fraction_b) < o.probability) continue;
    ++r.links_considered;
    m.relative_change =
        std::fabs(m.fraction_b - m.fraction_a) / std::max(m.fraction_a, m.fraction_b);
    m.significant = l.significant_fdr;
    if (m.relative_change > o.relative_precision) r.moving.push_back(m);
  }
  std::stable_sort(r.moving.begin(), r.moving.end(), [](const MovingLink& x, const MovingLink& y) {
    return x.relative_change > y.relative_change;
  });
  for (const auto& reef : c.reefs) {
    if (reef.rank_a != reef.rank_b)
      r.rank_shifts.push_back({reef.reef_id, reef.rank_a, reef.rank_b});
  }
  r.particles_needed = particles_for_precision(o.probability, o.relative_precision, o.confidence);
  if (r.particles_b > 0)
    r.precision_b = relative_half_width(o.probability, r.particles_b, o.confidence);
  return r;
}

}  // namespace cullcast::compare
