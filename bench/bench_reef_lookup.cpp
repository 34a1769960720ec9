// Reef look-up throughput: 60 invented reefs (star-shaped, some concave, some
// with holes) over a 0.6 x 0.4 degree region; random points over the region;
// one thread. Usage: bench_reef_lookup [points=20000000] [buffer_m=0]
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <random>
#include <vector>

#include "bench_args.hpp"
#include "cullcast/reefs/reef_lookup.hpp"

using namespace cullcast::reefs;

namespace {
Ring star(double lon, double lat, double r, int n, double wobble, int lobes, bool cw) {
  Ring ring;
  for (int i = 0; i < n; ++i) {
    const double t = 2 * M_PI * i / n * (cw ? -1 : 1);
    const double k = r * (1 + wobble * std::sin(lobes * t));
    ring.push_back({lon + k * std::cos(t), lat + k * std::sin(t) * 0.94});
  }
  ring.push_back(ring.front());
  return ring;
}
}  // namespace

int main(int argc, char** argv) {
  constexpr const char* kUsage = "bench_reef_lookup [points=20000000] [buffer_m=0]";
  cullcast::bench::help_if_asked(argc, argv, kUsage);
  const auto points = static_cast<long>(cullcast::bench::number_arg(argc, argv, 1, 20000000, 0, 1e10, kUsage));
  const double buffer_m = cullcast::bench::number_arg(argc, argv, 2, 0.0, 0, 1e5, kUsage);
  std::mt19937_64 gen(2025);
  std::uniform_real_distribution<double> u(0, 1);
  std::vector<Reef> reefs;
  for (int k = 0; k < 60; ++k) {
    // 8 x 8 jittered layout keeps reefs apart; radius 0.0012..0.009 deg (~5..300 ha).
    const double lon = 150.0 + 0.6 * ((k % 8) + 0.5) / 8 + 0.01 * (u(gen) - 0.5);
    const double lat = -20.4 + 0.4 * ((k / 8) + 0.5) / 8 + 0.006 * (u(gen) - 0.5);
    const double r = 0.0012 * std::pow(7.5, u(gen));
    Reef reef;
    reef.id = "B-" + std::to_string(k + 1);
    Polygon p{star(lon, lat, r, 16 + static_cast<int>(40 * u(gen)), k % 3 == 0 ? 0.4 : 0.12, 2 + k % 4, false), {}};
    if (k % 10 == 0) p.holes.push_back(star(lon, lat, r * 0.3, 12, 0.05, 2, true));
    reef.parts.push_back(p);
    reefs.push_back(reef);
  }
  const ReefSet set(std::move(reefs));
  const auto t0 = std::chrono::steady_clock::now();
  const ReefLookup lookup(set, buffer_m);
  const auto t1 = std::chrono::steady_clock::now();

  std::vector<double> lon(1 << 20), lat(1 << 20);
  for (std::size_t i = 0; i < lon.size(); ++i) {
    lon[i] = 150.0 + 0.6 * u(gen);
    lat[i] = -20.4 + 0.4 * u(gen);
  }
  long hits = 0;
  const std::size_t mask = lon.size() - 1;
  const auto t2 = std::chrono::steady_clock::now();
  for (long i = 0; i < points; ++i) {
    const std::size_t j = static_cast<std::size_t>(i) & mask;
    hits += lookup.reef_at(lon[j], lat[j]) >= 0;
  }
  const auto t3 = std::chrono::steady_clock::now();
  const double build_s = std::chrono::duration<double>(t1 - t0).count();
  const double run_s = std::chrono::duration<double>(t3 - t2).count();
  std::printf("reefs 60, buffer %.0f m, cell %.1f m, %zu cells (%zu edge cells), %.1f MB, build %.3f s\n", buffer_m,
              lookup.cell_size_m(), lookup.cell_count(), lookup.edge_cell_count(), lookup.memory_bytes() / 1048576.0,
              build_s);
  std::printf("%ld look-ups in %.3f s: %.1f million per second (1 thread), %.2f%% on a reef\n", points, run_s,
              points / run_s / 1e6, 100.0 * hits / points);
  return 0;
}
