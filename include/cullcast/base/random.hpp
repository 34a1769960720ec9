#pragma once
// Counter-based random numbers: Philox4x32-10 from Salmon, Moraes, Dror &
// Shaw (2011), "Parallel random numbers: as easy as 1, 2, 3", Proc. SC11.
// A draw is a pure function of (seed, event, source, particle, step, draw), so
// results do not depend on thread count, rank count or resume points.
#include <array>
#include <cmath>
#include <cstdint>

namespace cullcast {

using PhiloxCounter = std::array<std::uint32_t, 4>;
using PhiloxKey = std::array<std::uint32_t, 2>;

inline PhiloxCounter philox4x32_10(PhiloxCounter c, PhiloxKey k) noexcept {
  constexpr std::uint32_t kMul0 = 0xD2511F53u, kMul1 = 0xCD9E8D57u;
  constexpr std::uint32_t kWeyl0 = 0x9E3779B9u, kWeyl1 = 0xBB67AE85u;
  for (int round = 0; round < 10; ++round) {
    const std::uint64_t p0 = static_cast<std::uint64_t>(kMul0) * c[0];
    const std::uint64_t p1 = static_cast<std::uint64_t>(kMul1) * c[2];
    const auto hi0 = static_cast<std::uint32_t>(p0 >> 32), lo0 = static_cast<std::uint32_t>(p0);
    const auto hi1 = static_cast<std::uint32_t>(p1 >> 32), lo1 = static_cast<std::uint32_t>(p1);
    c = {hi1 ^ c[1] ^ k[0], lo1, hi0 ^ c[3] ^ k[1], lo0};
    k[0] += kWeyl0;
    k[1] += kWeyl1;
  }
  return c;
}

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

  // Two independent uniforms in the open interval (0, 1), 53-bit resolution
  // is not needed here: 32-bit words give a spacing of 2^-32.
  std::array<double, 2> uniform2(const StreamId& id, std::uint32_t step, Draw draw) const noexcept {
    const PhiloxCounter w = words(id, step, draw);
    return {to_open_unit(w[0], w[1]), to_open_unit(w[2], w[3])};
  }

  // Two independent standard normal deviates (Box–Muller).
  std::array<double, 2> normal2(const StreamId& id, std::uint32_t step, Draw draw) const noexcept {
    const auto u = uniform2(id, step, draw);
    const double radius = std::sqrt(-2.0 * std::log(u[0]));
    const double angle = 6.283185307179586 * u[1];
    return {radius * std::cos(angle), radius * std::sin(angle)};
  }

 private:
  // 53-bit uniform in (0, 1) from two words; never exactly 0 or 1.
  static double to_open_unit(std::uint32_t hi, std::uint32_t lo) noexcept {
    const std::uint64_t bits = (static_cast<std::uint64_t>(hi) << 21) ^ (lo >> 11);
    return (static_cast<double>(bits & ((1ULL << 53) - 1)) + 0.5) * 0x1p-53;
  }
  PhiloxKey key_;
};

}  // namespace cullcast
