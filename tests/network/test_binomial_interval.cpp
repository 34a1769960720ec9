// Wilson score intervals, resolution limit, rule of three, particle counts.
#include <catch2/catch.hpp>

#include <cmath>

#include "cullcast/network/binomial_interval.hpp"

using namespace cullcast::network;
using Catch::Detail::Approx;

TEST_CASE("Wilson interval matches Newcombe's worked examples") {
  // Newcombe (1998), "Two-sided confidence intervals for the single proportion:
  // comparison of seven methods", Stat. Med. 17:857-872, Table I, method 3
  // (Wilson score, no continuity correction): values from memory, each
  // confirmed to 4 decimals by an independent evaluation of Wilson's formula
  // with z = scipy.stats.norm.ppf(0.975) in Debian's /usr/bin/python3.
  struct Case {
    double x, n, low, high;
  };
  const Case cases[] = {{81, 263, 0.2553, 0.3662},
                        {15, 148, 0.0624, 0.1605},
                        {0, 20, 0.0, 0.1611},
                        {1, 29, 0.0061, 0.1718}};
  for (const auto& c : cases) {
    const Interval ci = wilson_interval(c.x, c.n, 0.95);
    CHECK(ci.low == Approx(c.low).margin(5e-5));
    CHECK(ci.high == Approx(c.high).margin(5e-5));
  }
}

TEST_CASE("Wilson interval: edge cases and properties") {
  // z for 95 %: 1.959963984540054 (scipy.stats.norm.ppf(0.975)).
  CHECK(normal_quantile_two_sided(0.95) == Approx(1.959963984540054).epsilon(1e-12));
  const Interval all = wilson_interval(29, 29, 0.95);  // x = n: upper bound 1
  CHECK(all.high == 1.0);
  CHECK(all.low == Approx(0.883030).margin(1e-6));     // scipy check as above
  const Interval none = wilson_interval(0, 0, 0.95);
  CHECK(none.low == 0.0);
  CHECK(none.high == 1.0);
  // Wider at higher confidence; narrower with more particles at the same p.
  CHECK(wilson_interval(10, 100, 0.99).high > wilson_interval(10, 100, 0.95).high);
  CHECK(wilson_interval(100, 1000, 0.95).high - wilson_interval(100, 1000, 0.95).low <
        wilson_interval(10, 100, 0.95).high - wilson_interval(10, 100, 0.95).low);
  CHECK_THROWS(normal_quantile_two_sided(1.0));
}

TEST_CASE("resolution limit, rule of three and particles for a precision") {
  CHECK(resolution_limit(1000) == 1e-3);
  // Hanley & Lippman-Hand (1983), JAMA 249:1743-1745: 3/n approximates the
  // exact 95 % upper bound 1 - 0.05^(1/n) for zero events in n trials.
  CHECK(rule_of_three(1000) == 3e-3);
  CHECK(rule_of_three(1000) == Approx(1 - std::pow(0.05, 1.0 / 1000)).epsilon(5e-3));
  // n = (1 - p) / (p e^2) from Var(p_hat) = p(1-p)/n: p = 0.01, e = 0.1 -> 9900.
  CHECK(particles_for_relative_error(0.01, 0.1) == 9900);
  const auto n = particles_for_relative_error(0.003, 0.25);
  CHECK(std::sqrt(0.003 * 0.997 / static_cast<double>(n)) / 0.003 <= 0.25);
  CHECK(std::sqrt(0.003 * 0.997 / static_cast<double>(n - 1)) / 0.003 > 0.25);
}
