// Benchmark of the currents module: streaming frames from a multi-file CF set
// and sampling velocities.
//
// Sample runs:
//   bench_currents                 # ~1 GB, 30 days, hourly, in /tmp/cullcast-bench-currents
//   bench_currents --small         # ~4 MB, 3 days: a quick check
//   bench_currents --dir D --keep  # reuse files already in D
// Reports frames/s (decode + layout through prepare()), sample() calls per
// second on random positions (1 thread), peak frame_bytes() and peak RSS.
#include <sys/resource.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <random>
#include <string>
#include <vector>

#include "cullcast/currents/current_field.hpp"
#include "cullcast/currents/synthetic_currents.hpp"

using namespace cullcast::currents;
using Clock = std::chrono::steady_clock;

namespace {
double seconds_since(Clock::time_point t0) { return std::chrono::duration<double>(Clock::now() - t0).count(); }
long peak_rss_kb() {
  rusage u{};
  getrusage(RUSAGE_SELF, &u);
  return u.ru_maxrss;
}
}  // namespace

int main(int argc, char** argv) {
  std::filesystem::path dir = "/tmp/cullcast-bench-currents";
  bool small = false, keep = false;
  for (int i = 1; i < argc; ++i) {
    if (!std::strcmp(argv[i], "--small")) small = true;
    else if (!std::strcmp(argv[i], "--keep")) keep = true;
    else if (!std::strcmp(argv[i], "--dir") && i + 1 < argc) dir = argv[++i];
    else {
      std::fprintf(stderr, "usage: bench_currents [--small] [--keep] [--dir DIR]\n");
      return 2;
    }
  }
  if (small) dir += "-small";
  SyntheticOptions o;  // the invented Lantern Reach field, 3 levels, u v temp chl
  o.days = small ? 3 : 30;
  o.days_per_file = small ? 1 : 5;
  o.spacing_deg = small ? 0.01 : 0.002;  // 61x41 or 301x201 nodes per level
  o.compress = false;                    // classic 64-bit offset: ~1 GB for 30 days
  std::vector<std::string> files;
  if (keep && std::filesystem::exists(dir)) {
    for (const auto& e : std::filesystem::directory_iterator(dir))
      if (e.path().extension() == ".nc") files.push_back(e.path().string());
  }
  if (files.empty()) {
    const auto t0 = Clock::now();
    for (const auto& p : write_synthetic_currents(dir, o)) files.push_back(p.string());
    std::uintmax_t bytes = 0;
    for (const auto& f : files) bytes += std::filesystem::file_size(f);
    std::printf("wrote %zu files, %.1f MB, in %.1f s\n", files.size(), bytes / 1e6, seconds_since(t0));
  }
  std::sort(files.begin(), files.end());

  cullcast::study::CurrentsSettings settings;
  for (const auto& f : files) settings.files.emplace_back(f);
  settings.frames_ahead = 1;
  auto t0 = Clock::now();
  auto field = CurrentField::open(settings);
  std::printf("open: %zu frames, grid %zu x %zu x %zu, %.2f s\n", field.frame_count(), field.grid().nx,
              field.grid().ny, field.grid().nz, seconds_since(t0));

  // Streaming: 10-minute steps through the whole record.
  const double dt = 600.0;
  size_t peak_bytes = 0, steps = 0;
  double prepare_s = 0;
  for (double t = field.time_begin_s(); t + dt <= field.time_end_s(); t += dt, ++steps) {
    const auto p0 = Clock::now();
    field.prepare(t, t + dt);
    prepare_s += seconds_since(p0);
    peak_bytes = std::max(peak_bytes, field.frame_bytes());
  }
  std::printf("stream: %zu steps, %zu frames in %.2f s: %.1f frames/s (%.1f MB/s of packed input)\n", steps,
              field.frame_count(), prepare_s, field.frame_count() / prepare_s,
              field.frame_count() * field.grid().nx * field.grid().ny * field.grid().nz * 2 * 2 / 1e6 / prepare_s);

  // Sampling: random positions inside the box, random times inside one interval.
  const double t_a = field.time_begin_s() + 24 * 3600.0;
  field.prepare(t_a, t_a + 3600.0);
  const auto& g = field.grid();
  const size_t n = 1 << 20;
  std::mt19937_64 rng(42);
  std::uniform_real_distribution<double> ulon(g.lon_min, g.lon_max), ulat(g.lat_min, g.lat_max),
      ut(t_a, t_a + 3600.0), uz(0.0, 20.0);
  std::vector<double> lon(n), lat(n), tt(n), zz(n);
  for (size_t i = 0; i < n; ++i) { lon[i] = ulon(rng); lat[i] = ulat(rng); tt[i] = ut(rng); zz[i] = uz(rng); }
  for (int with_depth = 0; with_depth < 2; ++with_depth) {
    double sink = 0;
    const int rounds = small ? 20 : 40;
    t0 = Clock::now();
    for (int r = 0; r < rounds; ++r)
      for (size_t i = 0; i < n; ++i) {
        const FlowSample s = field.sample(tt[i], lon[i], lat[i], with_depth ? zz[i] : 0.0);
        sink += s.u_m_s + s.v_m_s;
      }
    const double el = seconds_since(t0);
    std::printf("sample (%s): %.1f million calls/s, 1 thread (checksum %.3f)\n",
                with_depth ? "random depth 0..20 m, trilinear" : "surface, bilinear",
                rounds * static_cast<double>(n) / el / 1e6, sink);
  }
  std::printf("peak frame_bytes: %.2f MB; peak RSS: %.1f MB\n", peak_bytes / 1e6, peak_rss_kb() / 1024.0);
  return 0;
}
