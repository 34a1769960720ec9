#include <catch2/catch.hpp>

#include <cmath>
#include <limits>

#include "cullcast/base/plain_math.hpp"

// Reference: glibc's libm (std::log, std::sin, std::cos), correctly rounded
// or within 1 ulp for these functions on x86-64 (glibc manual, "Errors in
// Math Functions").

TEST_CASE("plain_log matches libm over the uniforms Box-Muller sees and beyond") {
  double worst = 0;
  // Uniforms in (0, 1) down to the smallest the generator makes (2^-54), then
  // a sweep over many binades on both sides of 1.
  for (int e = -54; e <= 0; ++e) {
    for (int k = 0; k < 997; ++k) {
      const double x = std::ldexp(1.0 + k / 997.0, e - 1);
      if (x >= 1.0) continue;
      const double err = std::fabs(cullcast::plain_log(x) - std::log(x)) / std::fabs(std::log(x));
      worst = std::max(worst, err);
    }
  }
  for (double x : {1e-300, 1e-30, 0.1, 0.5, 0.7071067811865476, 1.4142135623730951, 2.0, 3.0, 10.0, 1e30, 1e300}) {
    const double ref = std::log(x);
    const double err = std::fabs(cullcast::plain_log(x) - ref) / std::fabs(ref);
    worst = std::max(worst, err);
  }
  INFO("worst relative error " << worst);
  CHECK(worst < 4 * std::numeric_limits<double>::epsilon());
  // Near 1 the relative error of the result is what matters to Box-Muller's
  // radius sqrt(-2 ln u); check the absolute error there.
  for (double x : {1.0 - 1e-15, 1.0 - 1e-9, 1.0 - 1e-4, 0.999}) {
    CHECK(std::fabs(cullcast::plain_log(x) - std::log(x)) < 1e-18 + 2e-16 * std::fabs(std::log(x)));
  }
  CHECK(cullcast::plain_log(1.0) == 0.0);
}

TEST_CASE("plain_sincos_turns matches libm on a whole turn") {
  constexpr double kTwoPi = 6.283185307179586476925;
  double worst = 0;
  for (int k = 0; k <= 200000; ++k) {
    const double u = k / 200000.0;
    double s, c;
    cullcast::plain_sincos_turns(u, s, c);
    worst = std::max({worst, std::fabs(s - std::sin(kTwoPi * u)), std::fabs(c - std::cos(kTwoPi * u))});
  }
  INFO("worst absolute error " << worst);
  // The argument 2πu itself is rounded (about 4e-16 near u = 1), so compare
  // at a few ulp of 1.
  CHECK(worst < 1e-15);
  double s, c;
  cullcast::plain_sincos_turns(0.25, s, c);
  CHECK(s == 1.0);
  CHECK(std::fabs(c) < 1e-300);
  cullcast::plain_sincos_turns(0.0, s, c);
  CHECK(s == 0.0);
  CHECK(c == 1.0);
}
