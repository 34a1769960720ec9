#pragma once
// Natural logarithm, exponential and sine/cosine written out in plain
// arithmetic, for the random walk's Box–Muller transform and the larvae's
// temperature and food relations. Why not <cmath>:
//  - inline and branch-free, so the compiler can keep them in registers and
//    vectorise loops over particles (a libm call cannot be, and std::log may
//    set errno);
//  - the same bits on every machine and C library, so a study reproduces
//    across computers, not only across thread counts.
// Accuracy: within a few units in the last place of double over the ranges
// documented below (tested against glibc's libm). The series are the Taylor
// series of atanh (ln m = 2·atanh((m−1)/(m+1))) and of sin and cos
// (Abramowitz & Stegun 1964, Handbook of Mathematical Functions, 4.1.27,
// 4.3.65, 4.3.66), truncated where the next term is below 1e-16.
#include <bit>
#include <cstdint>

namespace cullcast {

// ln(x) for a positive normal double x (not for 0, subnormals, inf or NaN).
// Integer <-> double conversions go through the 2^52 "magic number" so the
// whole function is plain 64-bit integer and double arithmetic, which the
// compiler can vectorise on any x86-64 (no 64-bit integer conversions exist
// in SSE2/AVX).
inline double plain_log(double x) noexcept {
  constexpr double kLn2Hi = 6.93147180369123816490e-01;  // ln 2 split so e·ln2 is exact-ish
  constexpr double kLn2Lo = 1.90821492927058770002e-10;
  constexpr double kSqrt2 = 1.4142135623730951;
  constexpr std::uint64_t kMagicBits = 0x4330000000000000u;  // the double 2^52
  constexpr double kMagic = 0x1p52;
  const auto bits = std::bit_cast<std::uint64_t>(x);
  const std::uint64_t m_bits = (bits & ((std::uint64_t{1} << 52) - 1)) | (std::uint64_t{1023} << 52);
  // m in [1, 2) -> [sqrt(1/2), sqrt(2)) so that |s| <= 0.1716 below: halve m
  // and raise the exponent when m > sqrt(2) (positive doubles order like
  // their bit patterns; integer arithmetic keeps this free of branches).
  const std::uint64_t high = (std::bit_cast<std::uint64_t>(kSqrt2) - m_bits) >> 63;
  const double m = std::bit_cast<double>(m_bits - (high << 52));
  const double exponent = std::bit_cast<double>(((bits >> 52) + high) | kMagicBits) - kMagic - 1023.0;
  const double s = (m - 1.0) / (m + 1.0), s2 = s * s;
  const double series =
      1.0 + s2 * (1.0 / 3 + s2 * (1.0 / 5 + s2 * (1.0 / 7 + s2 * (1.0 / 9 + s2 * (1.0 / 11 + s2 * (1.0 / 13 +
      s2 * (1.0 / 15 + s2 * (1.0 / 17 + s2 * (1.0 / 19)))))))));
  return exponent * kLn2Hi + (exponent * kLn2Lo + 2.0 * s * series);
}

// e^x for |x| <= 700 (not for NaN): x = n·ln 2 + r with n the nearest
// integer to x/ln 2 (rounded through 1.5·2^52) and |r| <= ln 2 / 2, then
// e^x = 2^n · e^r with the Taylor series of e^r (A&S 4.2.1) to r^14/14!
// (the next term is below 5e-18). Branch-free: the larval development rates
// call it once per larva and step, several times cheaper than libm's exp.
inline double plain_exp(double x) noexcept {
  constexpr double kLog2e = 1.4426950408889634074;
  constexpr double kLn2Hi = 6.93147180369123816490e-01;  // low 32 bits zero: n·kLn2Hi is exact
  constexpr double kLn2Lo = 1.90821492927058770002e-10;
  constexpr double kShift = 0x1.8p52;
  const double shifted = x * kLog2e + kShift;
  const double n = shifted - kShift;
  const double r = (x - n * kLn2Hi) - n * kLn2Lo;
  constexpr double c2 = 1.0 / 2, c3 = 1.0 / 6, c4 = 1.0 / 24, c5 = 1.0 / 120, c6 = 1.0 / 720, c7 = 1.0 / 5040,
                   c8 = 1.0 / 40320, c9 = 1.0 / 362880, c10 = 1.0 / 3628800, c11 = 1.0 / 39916800,
                   c12 = 1.0 / 479001600, c13 = 1.0 / 6227020800.0, c14 = 1.0 / 87178291200.0;
  const double p =
      1.0 + r * (1.0 + r * (c2 + r * (c3 + r * (c4 + r * (c5 + r * (c6 + r * (c7 + r * (c8 + r * (c9 + r * (c10 +
      r * (c11 + r * (c12 + r * (c13 + r * c14)))))))))))));
  // n (two's complement in the low bits of `shifted`) into the exponent field.
  const std::uint64_t k = std::bit_cast<std::uint64_t>(shifted) - std::bit_cast<std::uint64_t>(kShift);
  return p * std::bit_cast<double>((k + 1023) << 52);
}

// sin(2πu) and cos(2πu) for a fraction of a turn u in [0, 1].
inline void plain_sincos_turns(double u, double& sin_out, double& cos_out) noexcept {
  constexpr double kTwoPi = 6.283185307179586476925;
  // Nearest quarter turn q (rounded by adding 2^52, whose low bits then hold
  // q), remainder within ±1/8 turn.
  const double shifted = 4.0 * u + 0x1p52;
  const double q = shifted - 0x1p52;
  const double x = (u - 0.25 * q) * kTwoPi;  // |x| <= π/4
  const double x2 = x * x;
  // Horner form with the coefficients ±1/n! folded at compile time (no division at run time).
  constexpr double kS3 = -1.0 / 6, kS5 = 1.0 / 120, kS7 = -1.0 / 5040, kS9 = 1.0 / 362880,
                   kS11 = -1.0 / 39916800, kS13 = 1.0 / 6227020800.0, kS15 = -1.0 / 1307674368000.0,
                   kS17 = 1.0 / 355687428096000.0;
  constexpr double kC2 = -1.0 / 2, kC4 = 1.0 / 24, kC6 = -1.0 / 720, kC8 = 1.0 / 40320,
                   kC10 = -1.0 / 3628800, kC12 = 1.0 / 479001600, kC14 = -1.0 / 87178291200.0,
                   kC16 = 1.0 / 20922789888000.0;
  const double s =
      x + x * x2 * (kS3 + x2 * (kS5 + x2 * (kS7 + x2 * (kS9 + x2 * (kS11 + x2 * (kS13 + x2 * (kS15 + x2 * kS17)))))));
  const double c =
      1.0 + x2 * (kC2 + x2 * (kC4 + x2 * (kC6 + x2 * (kC8 + x2 * (kC10 + x2 * (kC12 + x2 * (kC14 + x2 * kC16)))))));
  // Rotate by q quarter turns: (sin, cos) -> (cos, -sin) per quarter. The
  // choices are bit masks, not branches (vectorisable).
  const auto k = std::bit_cast<std::uint64_t>(shifted);
  const std::uint64_t swap = 0 - (k & 1);         // all ones on odd quarters
  const std::uint64_t sin_sign = (k & 2) << 62;     // quarters 2, 3: -sin
  const std::uint64_t cos_sign = ((k + 1) & 2) << 62;  // quarters 1, 2: -cos
  const auto sb = std::bit_cast<std::uint64_t>(s), cb = std::bit_cast<std::uint64_t>(c);
  sin_out = std::bit_cast<double>(((cb & swap) | (sb & ~swap)) ^ sin_sign);
  cos_out = std::bit_cast<double>(((sb & swap) | (cb & ~swap)) ^ cos_sign);
}

// Single-precision versions for the random walk's Box–Muller transform,
// twice as many lanes per vector instruction as double. Same series, cut
// where the next term is below float's resolution (6e-8); within a few
// units in the last place of float (tested against libm).

// ln(x) for a positive normal float x.
inline float plain_logf(float x) noexcept {
  constexpr float kLn2 = 0.693147180559945309f;
  constexpr float kSqrt2 = 1.41421356f;
  const auto bits = std::bit_cast<std::uint32_t>(x);
  const std::uint32_t m_bits = (bits & 0x7FFFFFu) | (127u << 23);
  const std::uint32_t high = (std::bit_cast<std::uint32_t>(kSqrt2) - m_bits) >> 31;  // m > sqrt(2): halve it
  const float m = std::bit_cast<float>(m_bits - (high << 23));
  const float exponent = static_cast<float>(static_cast<std::int32_t>((bits >> 23) + high) - 127);
  const float s = (m - 1.0f) / (m + 1.0f), s2 = s * s;  // |s| <= 0.1716
  const float series = 1.0f + s2 * (1.0f / 3 + s2 * (1.0f / 5 + s2 * (1.0f / 7 + s2 * (1.0f / 9))));
  return exponent * kLn2 + 2.0f * s * series;
}

// sin(2πu) and cos(2πu) for a fraction of a turn u in [0, 1].
inline void plain_sincos_turnsf(float u, float& sin_out, float& cos_out) noexcept {
  constexpr float kTwoPi = 6.28318530717958647f;
  const float shifted = 4.0f * u + 0x1p23f;  // nearest quarter turn in the low bits
  const float q = shifted - 0x1p23f;
  const float x = (u - 0.25f * q) * kTwoPi;  // |x| <= π/4
  const float x2 = x * x;
  constexpr float kS3 = -1.0f / 6, kS5 = 1.0f / 120, kS7 = -1.0f / 5040, kS9 = 1.0f / 362880;
  constexpr float kC2 = -1.0f / 2, kC4 = 1.0f / 24, kC6 = -1.0f / 720, kC8 = 1.0f / 40320, kC10 = -1.0f / 3628800;
  const float s = x + x * x2 * (kS3 + x2 * (kS5 + x2 * (kS7 + x2 * kS9)));
  const float c = 1.0f + x2 * (kC2 + x2 * (kC4 + x2 * (kC6 + x2 * (kC8 + x2 * kC10))));
  const auto k = std::bit_cast<std::uint32_t>(shifted);
  const std::uint32_t swap = 0u - (k & 1u);               // odd quarters swap sin and cos
  const std::uint32_t sin_sign = (k & 2u) << 30;          // quarters 2, 3: -sin
  const std::uint32_t cos_sign = ((k + 1u) & 2u) << 30;   // quarters 1, 2: -cos
  const auto sb = std::bit_cast<std::uint32_t>(s), cb = std::bit_cast<std::uint32_t>(c);
  sin_out = std::bit_cast<float>(((cb & swap) | (sb & ~swap)) ^ sin_sign);
  cos_out = std::bit_cast<float>(((sb & swap) | (cb & ~swap)) ^ cos_sign);
}

}  // namespace cullcast
