// Two-proportion z-test (pooled) and Benjamini & Hochberg (1995) adjusted
// p-values; formulas in the header.
#include "cullcast/compare/proportion_test.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

namespace cullcast::compare {

double two_sided_normal_p(double z) { return std::erfc(std::fabs(z) / std::sqrt(2.0)); }

ProportionTest two_proportion_z(std::int64_t x1, std::int64_t n1, std::int64_t x2,
                                std::int64_t n2) {
  ProportionTest t;
  if (n1 <= 0 || n2 <= 0) return t;
  const double a = static_cast<double>(x1), b = static_cast<double>(x2);
  const double m = static_cast<double>(n1), n = static_cast<double>(n2);
  const double pooled = (a + b) / (m + n);
  const double succ = a + b, fail = (m + n) - (a + b);
  t.min_expected = std::min(succ, fail) * std::min(m, n) / (m + n);
  const double variance = pooled * (1 - pooled) * (1 / m + 1 / n);
  if (!(variance > 0)) return t;  // both 0 or both 1: no evidence of a difference
  t.testable = true;
  t.z = (b / n - a / m) / std::sqrt(variance);
  t.p_value = two_sided_normal_p(t.z);
  return t;
}

std::vector<double> benjamini_hochberg(const std::vector<double>& p_values) {
  const std::size_t m = p_values.size();
  std::vector<std::size_t> order(m);
  std::iota(order.begin(), order.end(), std::size_t{0});
  std::stable_sort(order.begin(), order.end(),
                   [&](std::size_t i, std::size_t j) { return p_values[i] < p_values[j]; });
  std::vector<double> q(m, 1.0);
  double running = 1.0;
  for (std::size_t k = m; k-- > 0;) {  // from the largest p down: running minimum
    const double candidate =
        p_values[order[k]] * static_cast<double>(m) / static_cast<double>(k + 1);
    running = std::min(running, candidate);
    q[order[k]] = std::min(1.0, running);
  }
  return q;
}

}  // namespace cullcast::compare
