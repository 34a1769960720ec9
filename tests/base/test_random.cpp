#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "cullcast/base/random.hpp"

using cullcast::philox4x32_10;

TEST_CASE("Philox4x32-10 known-answer vectors") {
  // Known-answer vectors of Salmon et al. (2011), "Parallel random numbers: as
  // easy as 1, 2, 3" (SC11), as distributed with their Random123 library's
  // kat_vectors file — from memory.
  auto zero = philox4x32_10({0, 0, 0, 0}, {0, 0});
  CHECK(zero == cullcast::PhiloxCounter{0x6627e8d5u, 0xe169c58du, 0xbc57ac4cu, 0x9b00dbd8u});
  auto ones = philox4x32_10({0xffffffffu, 0xffffffffu, 0xffffffffu, 0xffffffffu},
                            {0xffffffffu, 0xffffffffu});
  CHECK(ones == cullcast::PhiloxCounter{0x408f276du, 0x41c83b0eu, 0xa20bc7c6u, 0x6d5451fdu});
  auto pi = philox4x32_10({0x243f6a88u, 0x85a308d3u, 0x13198a2eu, 0x03707344u},
                          {0xa4093822u, 0x299f31d0u});
  CHECK(pi == cullcast::PhiloxCounter{0xd16cfe09u, 0x94fdccebu, 0x5001e420u, 0x24126ea1u});
}

TEST_CASE("normal deviates have mean 0 and variance 1") {
  cullcast::CounterRandom rng(12345);
  const int n = 200000;
  double sum = 0, sum2 = 0, sum4 = 0;
  for (int i = 0; i < n / 2; ++i) {
    const auto z = rng.normal2({1, 2, static_cast<std::uint32_t>(i)}, 7, cullcast::Draw::diffusion);
    for (double v : z) {
      sum += v;
      sum2 += v * v;
      sum4 += v * v * v * v;
    }
  }
  const double mean = sum / n, var = sum2 / n - mean * mean;
  // Standard errors: mean 1/sqrt(n); variance sqrt(2/n); 5-sigma bounds.
  CHECK(std::fabs(mean) < 5 / std::sqrt(n));
  CHECK(std::fabs(var - 1) < 5 * std::sqrt(2.0 / n));
  CHECK(std::fabs(sum4 / n - 3) < 5 * std::sqrt(96.0 / n));  // kurtosis of N(0,1) is 3
}

TEST_CASE("streams differ by every key component and repeat exactly") {
  cullcast::CounterRandom a(1), b(2);
  const cullcast::StreamId id{3, 4, 5};
  CHECK(a.words(id, 6, cullcast::Draw::diffusion) == a.words(id, 6, cullcast::Draw::diffusion));
  CHECK(a.words(id, 6, cullcast::Draw::diffusion) != b.words(id, 6, cullcast::Draw::diffusion));
  CHECK(a.words(id, 6, cullcast::Draw::diffusion) != a.words(id, 7, cullcast::Draw::diffusion));
  CHECK(a.words(id, 6, cullcast::Draw::diffusion) != a.words(id, 6, cullcast::Draw::mortality));
  CHECK(a.words(id, 6, cullcast::Draw::diffusion) !=
        a.words({3, 4, 6}, 6, cullcast::Draw::diffusion));
  CHECK(a.words(id, 6, cullcast::Draw::diffusion) !=
        a.words({4, 4, 5}, 6, cullcast::Draw::diffusion));
  const auto u = a.uniform2(id, 0, cullcast::Draw::settlement);
  CHECK(u[0] > 0);
  CHECK(u[0] < 1);
}

TEST_CASE("normal2_batch gives normal2's deviates bit for bit") {
  const cullcast::CounterRandom rng(987654321ULL);
  constexpr int kCount = 37;  // not a multiple of the vector width
  std::uint32_t source[kCount], particle[kCount];
  double z0[kCount], z1[kCount];
  for (int l = 0; l < kCount; ++l) {
    source[l] = static_cast<std::uint32_t>(l % 5);
    particle[l] = static_cast<std::uint32_t>(1000 + 7 * l);
  }
  for (std::uint32_t step : {0u, 1u, 4242u}) {
    rng.normal2_batch(3, source, particle, kCount, step, cullcast::Draw::diffusion, z0, z1);
    for (int l = 0; l < kCount; ++l) {
      const auto z = rng.normal2({3, source[l], particle[l]}, step, cullcast::Draw::diffusion);
      CHECK(z0[l] == z[0]);
      CHECK(z1[l] == z[1]);
    }
  }
}

TEST_CASE("walk deviates: steps 2m and 2m+1 share one block; the batch form gives the same bits") {
  const cullcast::CounterRandom rng(24681357ULL);
  const cullcast::StreamId id{2, 4, 99};
  // Even step: the block's first two words; odd step: its last two.
  for (std::uint32_t m : {0u, 5u, 70000u}) {
    const auto even = rng.walk_normal2(id, 2 * m), odd = rng.walk_normal2(id, 2 * m + 1);
    CHECK(even == rng.normal2(id, m, cullcast::Draw::diffusion));
    CHECK(odd != even);
    CHECK(rng.walk_normal2(id, 2 * m + 2) != odd);
  }
  constexpr int kCount = 21;
  std::uint32_t source[kCount], particle[kCount];
  double z0[kCount], z1[kCount];
  float w0[kCount], w1[kCount];
  for (int l = 0; l < kCount; ++l) {
    source[l] = static_cast<std::uint32_t>(l % 3);
    particle[l] = static_cast<std::uint32_t>(50 + 11 * l);
  }
  for (std::uint32_t pair : {0u, 3u, 9999u}) {
    rng.walk_normal4_batch(2, source, particle, kCount, pair, z0, z1, w0, w1);
    for (int l = 0; l < kCount; ++l) {
      const auto even = rng.walk_normal2({2, source[l], particle[l]}, 2 * pair);
      const auto odd = rng.walk_normal2({2, source[l], particle[l]}, 2 * pair + 1);
      CHECK(z0[l] == even[0]);
      CHECK(z1[l] == even[1]);
      CHECK(static_cast<double>(w0[l]) == odd[0]);
      CHECK(static_cast<double>(w1[l]) == odd[1]);
    }
  }
}

// The widths of the grid stepper's AVX2 and AVX-512 kernels, here called
// from generic code (their multiplications out of line): the same bits as
// the scalar generator, for batches longer than one block of 4 x 16 lanes.
template <int Width>
void check_wide_walk_batch() {
  const cullcast::CounterRandom rng(0x5eed0000feedULL);
  constexpr int kCount = 70;
  std::uint32_t source[kCount], particle[kCount];
  double z0[kCount], z1[kCount];
  float w0[kCount], w1[kCount];
  for (int l = 0; l < kCount; ++l) {
    source[l] = static_cast<std::uint32_t>(7 * l % 5);
    particle[l] = static_cast<std::uint32_t>(0xFFFFFFF0u + 3 * l);  // wraps through 0
  }
  for (std::uint32_t pair : {0u, 17u, 0x7FFFFFFFu}) {
    rng.walk_normal4_batch<Width>(9, source, particle, kCount, pair, z0, z1, w0, w1);
    int differ = 0;
    for (int l = 0; l < kCount; ++l) {
      const auto even = rng.walk_normal2({9, source[l], particle[l]}, 2 * pair);
      const auto odd = rng.walk_normal2({9, source[l], particle[l]}, 2 * pair + 1);
      differ += z0[l] != even[0] || z1[l] != even[1] || static_cast<double>(w0[l]) != odd[0] ||
                static_cast<double>(w1[l]) != odd[1];
    }
    CHECK(differ == 0);
  }
}

TEST_CASE("walk deviates: the AVX2 and AVX-512 widths of the batch form give the same bits") {
#if defined(__x86_64__)
  __builtin_cpu_init();
  if (__builtin_cpu_supports("avx2")) check_wide_walk_batch<8>();
  if (__builtin_cpu_supports("avx512f")) check_wide_walk_batch<16>();
  check_wide_walk_batch<4>();
#else
  SUCCEED("only x86-64 has the wide forms");
#endif
}

TEST_CASE("walk deviates of odd and even steps are standard normal and uncorrelated") {
  // The two pairs of one Philox block are independent (Salmon et al. 2011,
  // SC11: every output word of Philox4x32-10 passes the Crush tests).
  const cullcast::CounterRandom rng(777);
  const int n = 100000;
  double sum_e = 0, sum_o = 0, sq_e = 0, sq_o = 0, cross = 0;
  for (int i = 0; i < n; ++i) {
    const cullcast::StreamId id{1, 3, static_cast<std::uint32_t>(i)};
    const double e = rng.walk_normal2(id, 40)[0], o = rng.walk_normal2(id, 41)[0];
    sum_e += e, sum_o += o, sq_e += e * e, sq_o += o * o, cross += e * o;
  }
  // 5-sigma bounds on mean (1/sqrt(n)), variance (sqrt(2/n)) and correlation (1/sqrt(n)).
  CHECK(std::fabs(sum_e / n) < 5 / std::sqrt(n));
  CHECK(std::fabs(sum_o / n) < 5 / std::sqrt(n));
  CHECK(std::fabs(sq_e / n - 1) < 5 * std::sqrt(2.0 / n));
  CHECK(std::fabs(sq_o / n - 1) < 5 * std::sqrt(2.0 / n));
  CHECK(std::fabs(cross / n) < 5 / std::sqrt(n));
}
