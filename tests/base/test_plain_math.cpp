#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstdint>
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

TEST_CASE("plain_exp matches libm over the development and completion range and beyond") {
  // Reference: glibc's exp (within 1 ulp on x86-64). Development rates take
  // ln(Q10)/10 · ΔT (|x| < 3 for any sea temperature), the completion
  // probability a logit (|x| < 250); the sweep covers [-700, 700].
  double worst = 0;
  for (int k = -700000; k <= 700000; ++k) {
    const double x = k * 1e-3 + 1.3e-7 * (k % 7);
    const double ref = std::exp(x);
    worst = std::max(worst, std::fabs(cullcast::plain_exp(x) - ref) / ref);
  }
  for (double x : {0.0, 1e-300, -1e-300, 1e-12, 0.34657359027997264, -0.34657359027997264, 0.6931471805599453, 1.0,
                   -1.0, 709.0 - 9.0, -700.0}) {
    const double ref = std::exp(x);
    worst = std::max(worst, std::fabs(cullcast::plain_exp(x) - ref) / ref);
  }
  INFO("worst relative error " << worst);
  CHECK(worst < 4 * std::numeric_limits<double>::epsilon());
  CHECK(cullcast::plain_exp(0.0) == 1.0);
  CHECK(cullcast::plain_exp(std::log(2.0)) == Approx(2.0).epsilon(1e-15));
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

// The single-precision versions, against libm in double (the reference
// rounded to float is within half an ulp of the true value).
TEST_CASE("plain_logf matches libm over every uniform the random walk sees") {
  // The uniforms are (k + 0.5)·2^-24 for k < 2^24: check a dense sweep, the
  // smallest ones, and the ones next to 1.
  double worst = 0;
  auto check = [&](float x) {
    const double ref = std::log(static_cast<double>(x));
    const double err = std::fabs(static_cast<double>(cullcast::plain_logf(x)) - ref);
    // Relative to |ln x|, but near x = 1 the absolute error is what matters
    // to the radius sqrt(-2 ln u): compare against max(|ln x|, 2^-24).
    worst = std::max(worst, err / std::max(std::fabs(ref), 0x1p-24));
  };
  for (std::uint32_t k = 0; k < (1u << 24); k += 97) check((static_cast<float>(k) + 0.5f) * 0x1p-24f);
  for (std::uint32_t k = 0; k < 4096; ++k) {
    check((static_cast<float>(k) + 0.5f) * 0x1p-24f);
    check((static_cast<float>((1u << 24) - 1 - k) + 0.5f) * 0x1p-24f);
  }
  for (float x : {1e-30f, 0.5f, 0.70710677f, 1.4142135f, 2.0f, 10.0f, 1e30f}) check(x);
  INFO("worst relative error " << worst);
  CHECK(worst < 4 * std::numeric_limits<float>::epsilon());
}

TEST_CASE("plain_sincos_turnsf matches libm on a whole turn") {
  constexpr double kTwoPi = 6.283185307179586476925;
  double worst = 0;
  for (int k = 0; k <= 200000; ++k) {
    const float u = static_cast<float>(k) / 200000.0f;
    float s, c;
    cullcast::plain_sincos_turnsf(u, s, c);
    const double angle = kTwoPi * static_cast<double>(u);
    worst = std::max({worst, std::fabs(s - std::sin(angle)), std::fabs(c - std::cos(angle))});
  }
  INFO("worst absolute error " << worst);
  // The argument 2πu is rounded in float (about 2.4e-7 near u = 1).
  CHECK(worst < 5e-7);
  float s, c;
  cullcast::plain_sincos_turnsf(0.25f, s, c);
  CHECK(s == 1.0f);
  cullcast::plain_sincos_turnsf(0.0f, s, c);
  CHECK(s == 0.0f);
  CHECK(c == 1.0f);
}
