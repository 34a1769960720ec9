#pragma once
// Counter-based random numbers: Philox4x32-10 from Salmon, Moraes, Dror &
// Shaw (2011), "Parallel random numbers: as easy as 1, 2, 3", Proc. SC11.
// A draw is a pure function of (seed, event, source, particle, step, draw), so
// results do not depend on thread count, rank count or resume points.
#include <array>
#include <bit>
#include <cmath>
#include <cstdint>
#include <cstring>
#if defined(__x86_64__)
#include <immintrin.h>
#endif

#include "cullcast/base/plain_math.hpp"

namespace cullcast {

using PhiloxCounter = std::array<std::uint32_t, 4>;
using PhiloxKey = std::array<std::uint32_t, 2>;

// Philox4x32's round multipliers and key increments (the paper above).
inline constexpr std::uint32_t kPhiloxMul0 = 0xD2511F53u, kPhiloxMul1 = 0xCD9E8D57u;
inline constexpr std::uint32_t kPhiloxWeyl0 = 0x9E3779B9u, kPhiloxWeyl1 = 0xBB67AE85u;

inline PhiloxCounter philox4x32_10(PhiloxCounter c, PhiloxKey k) noexcept {
  for (int round = 0; round < 10; ++round) {
    const std::uint64_t p0 = static_cast<std::uint64_t>(kPhiloxMul0) * c[0];
    const std::uint64_t p1 = static_cast<std::uint64_t>(kPhiloxMul1) * c[2];
    const auto hi0 = static_cast<std::uint32_t>(p0 >> 32), lo0 = static_cast<std::uint32_t>(p0);
    const auto hi1 = static_cast<std::uint32_t>(p1 >> 32), lo1 = static_cast<std::uint32_t>(p1);
    c = {hi1 ^ c[1] ^ k[0], lo1, hi0 ^ c[3] ^ k[1], lo0};
    k[0] += kPhiloxWeyl0;
    k[1] += kPhiloxWeyl1;
  }
  return c;
}

#if defined(__x86_64__)
// The one Philox operation plain vector arithmetic lacks: 32 x 32 -> 64-bit
// products of the low halves of 64-bit elements, per vector width. The
// AVX2 and AVX-512 forms are compiled for those instruction sets and end up
// only inside code compiled for them (the grid stepper's kernels, which
// inline everything they call); values go by reference, as vectors wider
// than the baseline's registers have an ABI of their own per instruction set.
namespace philox_simd {
template <int Width>
struct Ops;
template <>
struct Ops<4> {
  using U = std::uint64_t __attribute__((vector_size(16)));
  static void mul_even(const U& a, const U& b, U& out) noexcept {
    out = reinterpret_cast<U>(_mm_mul_epu32(reinterpret_cast<__m128i>(a), reinterpret_cast<__m128i>(b)));
  }
};
template <>
struct Ops<8> {
  using U = std::uint64_t __attribute__((vector_size(32)));
  [[gnu::target("avx2")]] static void mul_even(const U& a, const U& b, U& out) noexcept {
    out = reinterpret_cast<U>(_mm256_mul_epu32(reinterpret_cast<__m256i>(a), reinterpret_cast<__m256i>(b)));
  }
};
template <>
struct Ops<16> {
  using U = std::uint64_t __attribute__((vector_size(64)));
  [[gnu::target("avx512f")]] static void mul_even(const U& a, const U& b, U& out) noexcept {
    // (maskz with every lane set: the unmasked form reads an undefined source
    // that GCC 12 warns about)
    out = reinterpret_cast<U>(_mm512_maskz_mul_epu32(static_cast<__mmask8>(0xFF), reinterpret_cast<__m512i>(a),
                                                     reinterpret_cast<__m512i>(b)));
  }
};
}  // namespace philox_simd
#endif

// Identifies one particle's stream. `event` and `draw` share the last counter
// word (16 bits each): up to 65536 events and 65536 draws per step.
struct StreamId {
  std::uint32_t event = 0;
  std::uint32_t source = 0;
  std::uint32_t particle = 0;
};

// Well-known purposes of draws within one step, so they never collide.
enum class Draw : std::uint32_t {
  release_position = 0,  // step counter unused (0)
  release_depth = 1,
  diffusion = 2,
  mortality = 3,
  settlement = 4,
  vertical = 5,
};

class CounterRandom {
 public:
  explicit CounterRandom(std::uint64_t seed) noexcept
      : key_{static_cast<std::uint32_t>(seed), static_cast<std::uint32_t>(seed >> 32)} {}

  // Four raw 32-bit words for (stream, step, draw).
  PhiloxCounter words(const StreamId& id, std::uint32_t step, Draw draw) const noexcept {
    const std::uint32_t tail = (id.event << 16) | (static_cast<std::uint32_t>(draw) & 0xFFFFu);
    return philox4x32_10({id.particle, id.source, step, tail}, key_);
  }

  // Two independent uniforms in the open interval (0, 1), 52-bit resolution.
  std::array<double, 2> uniform2(const StreamId& id, std::uint32_t step, Draw draw) const noexcept {
    const PhiloxCounter w = words(id, step, draw);
    return {to_open_unit(w[0], w[1]), to_open_unit(w[2], w[3])};
  }

  // Two independent standard normal deviates (Box–Muller: Box & Muller 1958,
  // Ann. Math. Statist. 29:610–611) from the first two words, in single
  // precision (twice the vector lanes of double; a deviate's relative
  // rounding, 6e-8, is far below anything a random walk resolves) with the
  // portable log and sin/cos of plain_math.hpp, so they are the same bits on
  // every machine. The uniforms have 24 bits, the smallest is 2^-25, so the
  // deviates stop at 5.9 standard deviations (4e-9 of a normal lies beyond).
  std::array<double, 2> normal2(const StreamId& id, std::uint32_t step, Draw draw) const noexcept {
    const PhiloxCounter w = words(id, step, draw);
    float z0, z1;
    box_muller(w[0], w[1], z0, z1);
    return {z0, z1};
  }

  // The horizontal random walk's two deviates at `step`. Steps 2m and 2m+1
  // share one Philox block (counter step m): its first two words give the
  // even step's pair, its last two the odd step's. Still a pure function of
  // (stream, step); a stepper that keeps the odd step's pair from the even
  // step (GridStepper) runs the generator half as often.
  std::array<double, 2> walk_normal2(const StreamId& id, std::uint32_t step) const noexcept {
    const PhiloxCounter w = words(id, step >> 1, Draw::diffusion);
    const bool odd = (step & 1u) != 0;
    float z0, z1;
    box_muller(odd ? w[2] : w[0], odd ? w[3] : w[1], z0, z1);
    return {z0, z1};
  }

  // normal2() for a batch of particles of one event: z0[l], z1[l] are the
  // deviates of particle (source[l], particle[l]), bit for bit the same as
  // normal2() gives. Written as plain loops over the batch so the compiler
  // can vectorise them (the drift's grid stepper calls this per batch).
  void normal2_batch(std::uint32_t event, const std::uint32_t* source, const std::uint32_t* particle, int count,
                     std::uint32_t step, Draw draw, double* z0, double* z1) const noexcept {
    block_batch<false, 4>(event, source, particle, count, step, draw, z0, z1, nullptr, nullptr);
  }

  // walk_normal2() of a batch for both steps of the pair 2m, 2m+1 (`pair` =
  // m): even0/even1 the even step's deviates, odd0/odd1 the odd step's, bit
  // for bit as walk_normal2() gives them. `Width`: 32-bit lanes per vector
  // register of the caller's instruction set (4 SSE2; 8 AVX2 and 16 AVX-512,
  // only from code compiled for them: philox_simd above).
  template <int Width = 4>
  void walk_normal4_batch(std::uint32_t event, const std::uint32_t* source, const std::uint32_t* particle,
                          int count, std::uint32_t pair, double* even0, double* even1, float* odd0,
                          float* odd1) const noexcept {
    block_batch<true, Width>(event, source, particle, count, pair, Draw::diffusion, even0, even1, odd0, odd1);
  }

 private:
  // One Philox block per lane: deviates from its first two words into z0/z1
  // and, when `Both`, from its last two into w0/w1. Blocks are computed four
  // vector registers at a time (philox_lanes).
  template <bool Both, int Width>
  void block_batch(std::uint32_t event, const std::uint32_t* source, const std::uint32_t* particle, int count,
                   std::uint32_t step, Draw draw, double* z0, double* z1, float* w0, float* w1) const noexcept {
    constexpr int kBlockLanes = 4 * Width;
    const std::uint32_t tail = (event << 16) | (static_cast<std::uint32_t>(draw) & 0xFFFFu);
    for (int first = 0; first < count; first += kBlockLanes) {
      const int n = count - first < kBlockLanes ? count - first : kBlockLanes;
      alignas(64) std::uint32_t c0[kBlockLanes], c1[kBlockLanes], c2[kBlockLanes], c3[kBlockLanes];
      for (int l = 0; l < kBlockLanes; ++l) {  // spare lanes compute a block nobody reads
        c0[l] = l < n ? particle[first + l] : 0u;
        c1[l] = l < n ? source[first + l] : 0u;
      }
      philox_lanes<Width>(c0, c1, c2, c3, step, tail);
      for (int l = 0; l < n; ++l) {
        float a, b;
        box_muller(c0[l], c1[l], a, b);
        z0[first + l] = a;
        z1[first + l] = b;
        if constexpr (Both) box_muller(c2[l], c3[l], w0[first + l], w1[first + l]);
      }
    }
  }

  // philox4x32_10() of 4·Width counters (c0[l], c1[l], step, tail) with
  // this generator's key; the blocks replace the counters in c0..c3. Four
  // vector registers per word, Width lanes each: 32 x 32 -> 64-bit products
  // of the even lanes, then of the odd lanes shifted down, and the high and
  // low halves put back in lane order with masks. (The compiler's own
  // vectorisation of the scalar rounds spends three times the instructions
  // re-ordering lanes.) Integer operations only: the same bits as
  // philox4x32_10() on any processor and at any width.
  template <int Width>
  void philox_lanes(std::uint32_t* c0, std::uint32_t* c1, std::uint32_t* c2, std::uint32_t* c3, std::uint32_t step,
                    std::uint32_t tail) const noexcept {
#if defined(__x86_64__)
    using Ops = philox_simd::Ops<Width>;
    using U = typename Ops::U;  // Width/2 unsigned 64-bit elements
    constexpr int kGroups = 4;
    constexpr std::uint64_t kLow = 0xFFFFFFFFu;
    const U mul0 = U{} + std::uint64_t{kPhiloxMul0}, mul1 = U{} + std::uint64_t{kPhiloxMul1};
    const auto both_halves = [](std::uint32_t w, U& out) { out = U{} + ((std::uint64_t{w} << 32) | w); };
    U a[kGroups], b[kGroups], c[kGroups], d[kGroups];
    for (int g = 0; g < kGroups; ++g) {
      std::memcpy(&a[g], c0 + Width * g, sizeof(U));
      std::memcpy(&b[g], c1 + Width * g, sizeof(U));
      both_halves(step, c[g]);
      both_halves(tail, d[g]);
    }
    std::uint32_t k0 = key_[0], k1 = key_[1];
    for (int round = 0; round < 10; ++round) {
      U key0, key1;
      both_halves(k0, key0);
      both_halves(k1, key1);
      for (int g = 0; g < kGroups; ++g) {  // independent groups: their latencies overlap
        U even0, odd0, even1, odd1;
        const U a_odd = a[g] >> 32, c_odd = c[g] >> 32;
        Ops::mul_even(a[g], mul0, even0);
        Ops::mul_even(a_odd, mul0, odd0);
        Ops::mul_even(c[g], mul1, even1);
        Ops::mul_even(c_odd, mul1, odd1);
        const U hi0 = (even0 >> 32) | (odd0 & ~kLow), lo0 = (even0 & kLow) | (odd0 << 32);
        const U hi1 = (even1 >> 32) | (odd1 & ~kLow), lo1 = (even1 & kLow) | (odd1 << 32);
        a[g] = hi1 ^ b[g] ^ key0;
        b[g] = lo1;
        c[g] = hi0 ^ d[g] ^ key1;
        d[g] = lo0;
      }
      k0 += kPhiloxWeyl0;
      k1 += kPhiloxWeyl1;
    }
    for (int g = 0; g < kGroups; ++g) {
      std::memcpy(c0 + Width * g, &a[g], sizeof(U));
      std::memcpy(c1 + Width * g, &b[g], sizeof(U));
      std::memcpy(c2 + Width * g, &c[g], sizeof(U));
      std::memcpy(c3 + Width * g, &d[g], sizeof(U));
    }
#else
    for (int l = 0; l < 4 * Width; ++l) {
      const PhiloxCounter w = philox4x32_10({c0[l], c1[l], step, tail}, key_);
      c0[l] = w[0], c1[l] = w[1], c2[l] = w[2], c3[l] = w[3];
    }
#endif
  }

  // 52-bit uniform in (0, 1) from two words; never exactly 0 or 1. The
  // integer becomes a double through the 2^52 magic number (vectorisable).
  static double to_open_unit(std::uint32_t hi, std::uint32_t lo) noexcept {
    const std::uint64_t bits = ((static_cast<std::uint64_t>(hi) << 20) ^ (lo >> 12)) & ((std::uint64_t{1} << 52) - 1);
    return (std::bit_cast<double>(bits | 0x4330000000000000u) - 0x1p52 + 0.5) * 0x1p-52;
  }
  // A uniform in (0, 1) from the top 24 bits of a word, exact in float
  // (through int32: the conversion vectorises on any x86-64).
  static float to_open_unit_float(std::uint32_t w) noexcept {
    return (static_cast<float>(static_cast<std::int32_t>(w >> 8)) + 0.5f) * 0x1p-24f;
  }
  static void box_muller(std::uint32_t w0, std::uint32_t w1, float& z0, float& z1) noexcept {
    const float radius = std::sqrt(-2.0f * plain_logf(to_open_unit_float(w0)));
    float s, c;
    plain_sincos_turnsf(to_open_unit_float(w1), s, c);
    z0 = radius * c;
    z1 = radius * s;
  }
  PhiloxKey key_;
};

}  // namespace cullcast
