// Wilson (1927) J. Am. Stat. Assoc. 22:209-212; Hanley & Lippman-Hand (1983)
// JAMA 249:1743-1745. See binomial_interval.hpp.
#include "cullcast/network/binomial_interval.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>

#include <boost/math/distributions/normal.hpp>

namespace cullcast::network {

double normal_quantile_two_sided(double confidence) {
  if (!(confidence > 0 && confidence < 1)) {
    throw std::invalid_argument("confidence must lie in (0,1), found " + std::to_string(confidence));
  }
  const boost::math::normal_distribution<double> standard;
  return boost::math::quantile(standard, 0.5 + confidence / 2);
}

Interval wilson_interval(double x, double n, double confidence) {
  if (!(n > 0)) return {0.0, 1.0};
  x = std::clamp(x, 0.0, n);
  const double z = normal_quantile_two_sided(confidence);
  const double z2 = z * z;
  const double centre = (x + z2 / 2) / (n + z2);
  const double half = z / (n + z2) * std::sqrt(x * (n - x) / n + z2 / 4);
  // At x = 0 and x = n the bounds are exactly 0 and 1; rounding would leave 1e-17.
  return {x == 0 ? 0.0 : std::max(0.0, centre - half), x == n ? 1.0 : std::min(1.0, centre + half)};
}

double resolution_limit(std::int64_t n) { return n > 0 ? 1.0 / static_cast<double>(n) : 1.0; }

double rule_of_three(std::int64_t n) {
  return n > 0 ? std::min(1.0, 3.0 / static_cast<double>(n)) : 1.0;
}

std::int64_t particles_for_relative_error(double p, double e) {
  if (!(p > 0 && p <= 1) || !(e > 0)) {
    throw std::invalid_argument("particles_for_relative_error needs 0 < p <= 1 and e > 0");
  }
  return static_cast<std::int64_t>(std::ceil((1 - p) / (p * e * e) - 1e-9));
}

}  // namespace cullcast::network
