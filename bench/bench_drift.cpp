// Drift throughput: the full production step (RK4 with bilinear-in-space,
// linear-in-time sampling, random walk, land check, reef look-up, settlement
// test, ageing, mortality, fate bookkeeping) on a 600 x 400 hourly grid
// (~1 km) with 1 million particles. Reports particle-steps per second for 1
// and 2 threads (three runs each: best, median, worst), bytes per particle
// and the bytes of current frames held.
//
// Then, on 1 thread, the optional physics of issue 6: varying Kh
// (Smagorinsky, drift-corrected walk), 3-D depth (Kv walk, reflection) and
// both, to report their cost relative to the core path.
//
//   bench_drift [particles=1000000] [steps=36] [only-production]
//
// With a third argument "only-production" it times the grid stepper on one
// thread (or OMP_NUM_THREADS) and stops (for profiling with perf).
#include <omp.h>

#include <algorithm>
#include <chrono>
#include <ctime>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <netcdf>
#include <string>
#include <vector>

#include "bench_args.hpp"
#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/drift_step.hpp"
#include "cullcast/drift/grid_stepper.hpp"
#include "cullcast/reefs/reef_lookup.hpp"

using namespace cullcast;
namespace fs = std::filesystem;

namespace {

// CPU seconds used by the whole process (all threads): on a shared machine
// this separates the code's cost from time spent waiting for a core.
double process_cpu_s() {
  timespec ts{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

constexpr std::size_t kNx = 600, kNy = 400, kFrames = 8;
constexpr double kLon0 = 150.0, kLat0 = -22.0, kStep = 0.009;  // ~1 km
constexpr double kPi = 3.14159265358979323846;

bool is_land(std::size_t i, std::size_t j) {
  const double x = static_cast<double>(i) / kNx, y = static_cast<double>(j) / kNy;
  return std::hypot(x - 0.3, y - 0.6) < 0.04 || std::hypot(x - 0.7, y - 0.3) < 0.05;
}

fs::path write_grid(const fs::path& dir) {
  using namespace netCDF;
  fs::create_directories(dir);
  const fs::path file = dir / "bench_currents.nc";
  NcFile f(file.string(), NcFile::replace, NcFile::nc4);
  f.putAtt("Conventions", "CF-1.13");
  const NcDim t = f.addDim("time", kFrames), y = f.addDim("lat", kNy), x = f.addDim("lon", kNx);
  NcVar vt = f.addVar("time", ncDouble, t);
  vt.putAtt("units", "hours since 2026-12-01 00:00:00");
  vt.putAtt("calendar", "standard");
  vt.putAtt("standard_name", "time");
  NcVar vy = f.addVar("lat", ncDouble, y);
  vy.putAtt("units", "degrees_north");
  vy.putAtt("standard_name", "latitude");
  NcVar vx = f.addVar("lon", ncDouble, x);
  vx.putAtt("units", "degrees_east");
  vx.putAtt("standard_name", "longitude");
  std::vector<double> times(kFrames), lats(kNy), lons(kNx);
  for (std::size_t k = 0; k < kFrames; ++k) times[k] = static_cast<double>(k);
  for (std::size_t j = 0; j < kNy; ++j) lats[j] = kLat0 + j * kStep;
  for (std::size_t i = 0; i < kNx; ++i) lons[i] = kLon0 + i * kStep;
  vt.putVar(times.data());
  vy.putVar(lats.data());
  vx.putVar(lons.data());
  const std::vector<NcDim> dims{t, y, x};
  NcVar u = f.addVar("u", ncFloat, dims), v = f.addVar("v", ncFloat, dims);
  u.putAtt("standard_name", "eastward_sea_water_velocity");
  v.putAtt("standard_name", "northward_sea_water_velocity");
  for (NcVar* var : {&u, &v}) {
    var->putAtt("units", "m s-1");
    var->putAtt("_FillValue", ncFloat, -999.0f);
  }
  std::vector<float> bu(kNx * kNy), bv(kNx * kNy);
  for (std::size_t k = 0; k < kFrames; ++k) {
    const double phase = 2 * kPi * k / 12.42;
    for (std::size_t j = 0; j < kNy; ++j) {
      for (std::size_t i = 0; i < kNx; ++i) {
        const double xx = 2 * kPi * i / kNx, yy = 2 * kPi * j / kNy;
        const std::size_t n = j * kNx + i;
        bu[n] = is_land(i, j) ? -999.0f
                              : static_cast<float>(-0.15 + 0.3 * std::sin(yy) * std::cos(xx) +
                                                   0.2 * std::cos(phase));
        bv[n] = is_land(i, j) ? -999.0f
                              : static_cast<float>(0.1 - 0.3 * std::cos(yy) * std::sin(xx) +
                                                   0.1 * std::sin(phase));
      }
    }
    u.putVar({k, 0, 0}, {1, kNy, kNx}, bu.data());
    v.putVar({k, 0, 0}, {1, kNy, kNx}, bv.data());
  }
  return file;
}

reefs::ReefSet make_reefs() {
  std::vector<reefs::Reef> list;
  for (int r = 0; r < 60; ++r) {
    reefs::Reef reef;
    reef.id = "B-" + std::to_string(r);
    reef.name = reef.id;
    const double cx = kLon0 + 0.3 + 4.8 * ((r * 37) % 60) / 60.0;
    const double cy = kLat0 + 0.3 + 3.0 * ((r * 23) % 60) / 60.0;
    const double h = 0.004 + 0.002 * (r % 5);
    reefs::Polygon poly;
    poly.outer = {{cx - h, cy - h}, {cx + h, cy - h}, {cx + h, cy + h}, {cx - h, cy + h}, {cx - h, cy - h}};
    reef.parts.push_back(poly);
    reef.lon_min = cx - h, reef.lon_max = cx + h, reef.lat_min = cy - h, reef.lat_max = cy + h;
    reef.centroid = {cx, cy};
    list.push_back(reef);
  }
  return reefs::ReefSet(std::move(list));
}

struct BenchFields {
  double kh(double, double, double) const noexcept { return 1.0; }
  double kv(double, double, double) const noexcept { return 0.001; }
  double sea_floor_m(double, double) const noexcept { return 50.0; }
  double temperature_c(double, double, double, double) const noexcept { return 28.0; }
  double chlorophyll_mg_m3(double, double, double, double) const noexcept { return 1.0; }
};

}  // namespace

int main(int argc, char** argv) {
  constexpr const char* kUsage = "bench_drift [particles=1000000] [steps=36] [only-production]";
  bench::help_if_asked(argc, argv, kUsage);
  const auto n = static_cast<std::size_t>(bench::number_arg(argc, argv, 1, 1000000, 1, 1e9, kUsage));
  const auto steps = static_cast<std::uint32_t>(bench::number_arg(argc, argv, 2, 36, 1, 1e6, kUsage));
  if (argc > 3 && std::string(argv[3]) != "only-production") bench::usage_and_exit(kUsage, 2);
  const fs::path dir = fs::temp_directory_path() / "cullcast-bench";
  std::printf("writing a %zu x %zu x %zu-frame grid ...\n", kNx, kNy, kFrames);
  const fs::path file = write_grid(dir);
  currents::CurrentField field = currents::CurrentField::open_files({file.string()});
  const reefs::ReefSet reef_set = make_reefs();
  const reefs::ReefLookup lookup(reef_set, 0.0);

  study::LarvaeSettings larvae;
  larvae.precompetent_days = 0.0;  // competent from the start: every step tests for a reef
  larvae.competent_days = 40.0;
  larvae.mortality_per_day = 0.1;
  const drift::LarvalClock clock(larvae);
  const auto earth = drift::EarthModel::sphere(6371000.0);
  drift::StepSettings s;
  s.event_start_s = field.time_begin_s();
  s.dt_s = 600;
  s.kh_m2_s = 1.0;
  const CounterRandom rng(42);

  // Spatially ordered, as particles are when released source by source:
  // about four per grid cell, row by row, with a deterministic jitter.
  std::vector<double> place_lon, place_lat;
  std::size_t placed = 0;
  const double per_cell = static_cast<double>(n) / ((kNx - 12) * (kNy - 12) * 0.97);
  for (std::size_t k = 0; placed < n; ++k) {
    const double cell = k / per_cell;
    const double row = std::floor(cell / (kNx - 12)), col = cell - row * (kNx - 12);
    const double jitter = std::fmod(k * 0.6180339887498949, 1.0);
    const double lon = kLon0 + (6 + col) * kStep, lat = kLat0 + (6 + row + jitter) * kStep;
    if (row >= kNy - 12) break;
    if (field.status(lon, lat) != currents::SampleStatus::water) continue;
    place_lon.push_back(lon), place_lat.push_back(lat);
    ++placed;
  }
  drift::ParticleSet start_state;
  start_state.resize(placed);
  for (std::size_t i = 0; i < placed; ++i) {
    start_state.lon[i] = place_lon[i], start_state.lat[i] = place_lat[i];
    start_state.index[i] = static_cast<std::uint32_t>(i);
  }

  // Runs `steps` steps from the start state; production = the grid stepper
  // used by run_drift on uniform grids, otherwise the generic templated step.
  auto measure = [&](int threads, const char* label, bool production, const drift::StepSettings& settings,
                     const drift::LarvalClock& larval_clock) {
    omp_set_num_threads(threads);
    drift::ParticleSet p = start_state;
    drift::GridStepper stepper(field, earth);
    std::vector<std::uint8_t> now;
    std::uint64_t particle_steps = 0;
    double busy = 0, cpu = 0;
    for (std::uint32_t k = 0; k < steps; ++k) {
      const double t0 = settings.event_start_s + k * settings.dt_s;
      field.prepare(t0, t0 + settings.dt_s);
      const auto start = std::chrono::steady_clock::now();
      const double cpu_start = process_cpu_s();
      const auto tally =
          production ? stepper.step(p, k, settings, larval_clock, lookup, rng, now)
                     : drift::drift_step(p, k, settings, larval_clock, earth, field, lookup, rng, now);
      busy += std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
      cpu += process_cpu_s() - cpu_start;
      particle_steps += tally.particle_steps;
    }
    std::printf("threads %d, %-34s %6.1f million particle-steps/s wall, %6.1f per CPU-second\n", threads, label,
                particle_steps / busy / 1e6, particle_steps / cpu / 1e6);
    return particle_steps / busy / 1e6;
  };
  std::printf("grid stepper kernel: %s (CULLCAST_VECTOR_ISA caps it)\n",
              drift::GridStepper::isa_name(drift::GridStepper(field, earth).instruction_set()));
  if (argc > 3 && std::string(argv[3]) == "only-production") {
    const char* threads = std::getenv("OMP_NUM_THREADS");
    measure(threads != nullptr ? std::max(1, std::atoi(threads)) : 1, "production step (grid stepper):", true, s,
            clock);
    return 0;
  }
  // The production step three times per thread count, interleaved: on a
  // shared machine one run can lose a fifth of its speed to other guests,
  // so the best and the median of the three are both reported.
  constexpr int kRepeats = 3;
  std::vector<double> production[2];
  for (int r = 0; r < kRepeats; ++r) {
    for (int threads : {1, 2}) {
      production[threads - 1].push_back(measure(threads, "production step (grid stepper):", true, s, clock));
    }
  }
  for (int threads : {1, 2}) {
    std::vector<double>& rates = production[threads - 1];
    std::sort(rates.begin(), rates.end());
    std::printf("threads %d, production step, %d runs: best %.1f, median %.1f, worst %.1f million particle-steps/s\n",
                threads, kRepeats, rates.back(), rates[rates.size() / 2], rates.front());
  }
  for (int threads : {1, 2}) measure(threads, "generic drift_step:", false, s, clock);
  // Where the time goes (1 thread): without the random walk, without reef
  // look-ups (larvae not yet competent), without both.
  drift::StepSettings no_walk = s;
  no_walk.kh_m2_s = 0;
  study::LarvaeSettings young = larvae;
  young.precompetent_days = 30.0;
  const drift::LarvalClock young_clock(young);
  measure(1, "  breakdown: no random walk", true, no_walk, clock);
  measure(1, "  breakdown: no reef look-up", true, s, young_clock);
  measure(1, "  breakdown: neither", true, no_walk, young_clock);
  {
    omp_set_num_threads(1);
    const BenchFields fields;
    auto timed = [&](const char* name, const auto& extras) {
      drift::ParticleSet p;
      p.resize(n);
      for (std::size_t i = 0; i < n; ++i) {
        p.lon[i] = kLon0 + (6 + (i % (kNx - 12))) * kStep;
        p.lat[i] = kLat0 + (6 + (i / (kNx - 12)) % (kNy - 12)) * kStep + 0.3 * kStep;
        p.depth_m[i] = 5.0f;
        p.index[i] = static_cast<std::uint32_t>(i);
        if (field.status(p.lon[i], p.lat[i]) != currents::SampleStatus::water) p.fate[i] = drift::Fate::lost;
      }
      std::vector<std::uint8_t> now;
      std::uint64_t particle_steps = 0;
      double busy = 0;
      for (std::uint32_t k = 0; k < steps; ++k) {
        const double t0 = s.event_start_s + k * s.dt_s;
        field.prepare(t0, t0 + s.dt_s);
        const auto start = std::chrono::steady_clock::now();
        const auto tally = drift::drift_step(p, k, s, clock, earth, field, lookup, rng, now, extras);
        busy += std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
        particle_steps += tally.particle_steps;
      }
      std::printf("1 thread, %-28s %.2f million particle-steps/s\n", name, particle_steps / busy / 1e6);
    };
    timed("core path (NoExtras):", drift::NoExtras{});
    drift::StepExtras<BenchFields> smag;
    smag.fields = &fields;
    smag.kh_mode = drift::KhMode::smagorinsky;
    smag.spacing_m = 1000.0;
    timed("Smagorinsky Kh (Visser):", smag);
    drift::StepExtras<BenchFields> field_kh = smag;
    field_kh.kh_mode = drift::KhMode::field;
    timed("Kh field (Visser):", field_kh);
    study::MotionSettings m3;
    m3.depth = "3d";
    drift::StepExtras<BenchFields> three_d;
    three_d.fields = &fields;
    three_d.depth = drift::DepthRule(m3);
    three_d.kh_m2_s = 1.0;
    three_d.kv_m2_s = 0.001;
    timed("3-D (w, Kv, reflection):", three_d);
  }
  // The arrays of ParticleSet plus the walk deviates the grid stepper keeps
  // for the next step (Kh > 0 here).
  std::printf("memory: %zu bytes per particle; current frames held: %.1f MB\n",
              drift::ParticleSet::bytes_per_particle + drift::ParticleSet::walk_cache_bytes_per_particle,
              field.frame_bytes() / 1e6);
  fs::remove_all(dir);
  return 0;
}
