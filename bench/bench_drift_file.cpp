// The production core drift step on files, for the side-by-side comparison
// with the NumPy baseline (bench/numpy_drift_baseline.py, bench/bench_compare.py):
// reads CF-NetCDF currents through currents::CurrentField, a reef layer
// through reefs::ReefSet/ReefLookup, and a particle file, then runs
// the production step as run_drift chooses it (drift::GridStepper on a uniform
// regular grid, else drift::drift_step: RK4, random walk, land hold, loss,
// constant-hazard weight decay, reef look-up, settlement) for a number of steps.
//
//   bench_drift_file --currents F.nc[,G.nc...] --reefs REEFS.geojson --particles P.bin
//                    [--steps 144] [--dt 600] [--kh 1] [--threads 1] [--precompetent-days 0]
//                    [--competent-days 40] [--mortality-per-day 0.1] [--seed 42]
//                    [--out FINAL.bin] [--write-reef-raster RASTER.bin --raster-factor 8]
//                    [--background-reads auto|on|off]
//
// Particle file: little-endian float64 pairs (lon, lat), degrees; every
// particle is released at the first frame, at depth 0 m.
// --out writes, per particle, float64 lon, lat, weight and one byte of fate
// (drift::Fate) as four consecutive arrays.
// --write-reef-raster writes the reef layer sampled with ReefLookup::reef_at at
// the centres of a raster `raster-factor` times finer than the currents grid,
// as int32 (row-major, rows from the south) after a header of 4 float64
// (lon0, lat0, dlon, dlat of the south-west cell's corner and the cell size)
// and 2 int64 (nx, ny). That raster is the NumPy side's reef look-up.
//
// Output: one line "RESULT key=value ..." with the step time (drift_step only),
// the frame-preparation time (NetCDF reads and decoding) and the whole wall time.
#include <omp.h>

#include <chrono>
#include <ctime>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <fstream>
#include <functional>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include "cullcast/base/error.hpp"
#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/drift_step.hpp"
#include "cullcast/drift/grid_stepper.hpp"
#include "cullcast/reefs/reef_lookup.hpp"
#include "cullcast/reefs/reef_set.hpp"

using namespace cullcast;

namespace {

struct Options {
  std::vector<std::string> currents;
  std::string reefs, particles, out, raster;
  std::uint32_t steps = 144;
  double dt_s = 600;                  // seconds
  double kh_m2_s = 1.0;               // m2/s
  int threads = 1;
  double precompetent_days = 0.0;     // days
  double competent_days = 40.0;       // days
  double mortality_per_day = 0.1;     // 1/day
  std::uint64_t seed = 42;
  int raster_factor = 8;              // raster cells per currents-grid spacing
  std::string background = "auto";    // next frames decoded on a spare thread: on, off, auto (as disperse)
};

std::vector<std::string> split(const std::string& s) {
  std::vector<std::string> parts;
  std::stringstream in(s);
  std::string item;
  while (std::getline(in, item, ',')) if (!item.empty()) parts.push_back(item);
  return parts;
}

void set_option(Options& o, const std::string& key, const std::string& val) {
  if (key == "--currents") o.currents = split(val);
  else if (key == "--reefs") o.reefs = val;
  else if (key == "--particles") o.particles = val;
  else if (key == "--out") o.out = val;
  else if (key == "--write-reef-raster") o.raster = val;
  else if (key == "--raster-factor") o.raster_factor = std::stoi(val);
  else if (key == "--steps") o.steps = static_cast<std::uint32_t>(std::stoul(val));
  else if (key == "--dt") o.dt_s = std::stod(val);
  else if (key == "--kh") o.kh_m2_s = std::stod(val);
  else if (key == "--threads") o.threads = std::stoi(val);
  else if (key == "--precompetent-days") o.precompetent_days = std::stod(val);
  else if (key == "--competent-days") o.competent_days = std::stod(val);
  else if (key == "--mortality-per-day") o.mortality_per_day = std::stod(val);
  else if (key == "--seed") o.seed = std::stoull(val);
  else if (key == "--background-reads") o.background = val;
  else throw InputError("unknown option " + key);
}

Options parse(int argc, char** argv) {
  Options o;
  for (int k = 1; k < argc; ++k) {
    const std::string key = argv[k];
    if (k + 1 >= argc) throw InputError("option " + key + " needs a value");
    const std::string val = argv[++k];
    try {
      set_option(o, key, val);
    } catch (const std::logic_error&) {  // std::stoi and kin: not a number, or out of range
      throw InputError("option " + key + " expected a number, found \"" + val + "\"");
    }
  }
  if (o.currents.empty() || o.reefs.empty())
    throw InputError("--currents and --reefs are required");
  if (o.raster.empty() && o.particles.empty())
    throw InputError("--particles is required (or --write-reef-raster)");
  if (o.raster_factor < 1) throw InputError("--raster-factor must be >= 1");
  if (o.threads < 1) throw InputError("--threads must be >= 1");
  if (o.background != "auto" && o.background != "on" && o.background != "off")
    throw InputError("--background-reads expected auto, on or off, found \"" + o.background + "\"");
  return o;
}

std::vector<double> read_pairs(const std::string& path) {
  std::ifstream in(path, std::ios::binary | std::ios::ate);
  if (!in) throw InputError("cannot open particle file " + path);
  const std::streamsize bytes = in.tellg();
  if (bytes <= 0 || bytes % 16 != 0)
    throw InputError("particle file " + path + ": expected a multiple of 16 bytes (float64 lon, lat pairs), found " +
                     std::to_string(bytes));
  std::vector<double> v(static_cast<std::size_t>(bytes / 8));
  in.seekg(0);
  in.read(reinterpret_cast<char*>(v.data()), bytes);
  if (!in) throw InputError("cannot read particle file " + path);
  return v;
}

void write_raster(const Options& o, const currents::CurrentField& field, const reefs::ReefLookup& lookup) {
  const currents::GridSummary& g = field.grid();
  const double dlon = (g.lon_max - g.lon_min) / static_cast<double>(g.nx - 1) / o.raster_factor;
  const double dlat = (g.lat_max - g.lat_min) / static_cast<double>(g.ny - 1) / o.raster_factor;
  const std::int64_t nx = static_cast<std::int64_t>((g.nx - 1) * o.raster_factor);
  const std::int64_t ny = static_cast<std::int64_t>((g.ny - 1) * o.raster_factor);
  std::vector<std::int32_t> cells(static_cast<std::size_t>(nx * ny));
  for (std::int64_t j = 0; j < ny; ++j)
    for (std::int64_t i = 0; i < nx; ++i)
      cells[j * nx + i] = lookup.reef_at(g.lon_min + (i + 0.5) * dlon, g.lat_min + (j + 0.5) * dlat);
  std::ofstream out(o.raster, std::ios::binary);
  const double head[4] = {g.lon_min, g.lat_min, dlon, dlat};
  const std::int64_t dims[2] = {nx, ny};
  out.write(reinterpret_cast<const char*>(head), sizeof head);
  out.write(reinterpret_cast<const char*>(dims), sizeof dims);
  out.write(reinterpret_cast<const char*>(cells.data()), static_cast<std::streamsize>(cells.size() * 4));
  if (!out) throw InputError("cannot write reef raster " + o.raster);
  std::size_t reef_cells = 0;
  for (const auto c : cells) reef_cells += c >= 0;
  std::printf("RASTER nx=%lld ny=%lld dlon=%.6g dlat=%.6g reef_cells=%zu\n", static_cast<long long>(nx),
              static_cast<long long>(ny), dlon, dlat, reef_cells);
}

}  // namespace

int main(int argc, char** argv) try {
  const auto wall0 = std::chrono::steady_clock::now();
  const Options o = parse(argc, argv);
  omp_set_num_threads(o.threads);

  currents::CurrentField field = currents::CurrentField::open_files(o.currents);
  if (o.background != "auto") field.set_background_reads(o.background == "on");
  study::ReefSettings rs;
  rs.layer = o.reefs;
  const reefs::ReefSet reef_set = reefs::ReefSet::load(rs);
  const reefs::ReefLookup lookup(reef_set, 0.0);
  if (!o.raster.empty()) {
    write_raster(o, field, lookup);
    if (o.particles.empty()) return 0;
  }

  const std::vector<double> pairs = read_pairs(o.particles);
  drift::ParticleSet p;
  p.resize(pairs.size() / 2);
  for (std::size_t i = 0; i < p.size(); ++i) {
    p.lon[i] = pairs[2 * i];
    p.lat[i] = pairs[2 * i + 1];
    p.index[i] = static_cast<std::uint32_t>(i);
  }

  study::LarvaeSettings larvae;
  larvae.precompetent_days = o.precompetent_days;
  larvae.competent_days = o.competent_days;
  larvae.mortality_per_day = o.mortality_per_day;
  const drift::LarvalClock clock(larvae);
  const auto earth = drift::EarthModel::sphere(6371000.0);
  drift::StepSettings s;
  s.event_start_s = field.time_begin_s();
  s.dt_s = o.dt_s;
  s.kh_m2_s = o.kh_m2_s;
  const CounterRandom rng(o.seed);

  // As run_drift: the grid stepper where it applies (uniform regular grid).
  drift::GridStepper stepper(field, earth);
  const drift::LarvalEnvironment environment(larvae, false, false);
  const std::function<void()> read_ahead = [&field] { field.read_pending(); };
  const bool on_grid = drift::GridStepper::applies(field, p);
  std::vector<std::uint8_t> now;
  drift::StepTally total;
  double step_s = 0, prepare_s = 0;
  double step_cpu_s = 0;  // process CPU time in drift_step, summed over threads (load-independent-ish)
  for (std::uint32_t k = 0; k < o.steps; ++k) {
    const double t0 = s.event_start_s + k * s.dt_s;
    const auto a = std::chrono::steady_clock::now();
    field.prepare(t0, t0 + s.dt_s);
    const auto b = std::chrono::steady_clock::now();
    const std::clock_t cpu0 = std::clock();
    const auto tally = on_grid ? stepper.step(p, k, s, clock, lookup, rng, now, environment, read_ahead)
                               : drift::drift_step(p, k, s, clock, earth, field, lookup, rng, now);
    const auto c = std::chrono::steady_clock::now();
    step_cpu_s += static_cast<double>(std::clock() - cpu0) / CLOCKS_PER_SEC;
    prepare_s += std::chrono::duration<double>(b - a).count();
    step_s += std::chrono::duration<double>(c - b).count();
    total.particle_steps += tally.particle_steps;
    total.land_contacts += tally.land_contacts;
    total.settled += tally.settled;
    total.died += tally.died;
    total.lost += tally.lost;
  }
  if (!o.out.empty()) {
    std::ofstream out(o.out, std::ios::binary);
    const auto bytes = static_cast<std::streamsize>(p.size() * sizeof(double));
    out.write(reinterpret_cast<const char*>(p.lon.data()), bytes);
    out.write(reinterpret_cast<const char*>(p.lat.data()), bytes);
    out.write(reinterpret_cast<const char*>(p.weight.data()), bytes);
    out.write(reinterpret_cast<const char*>(p.fate.data()), static_cast<std::streamsize>(p.size()));
    if (!out) throw InputError("cannot write " + o.out);
  }
  std::size_t drifting = 0;
  for (const auto f : p.fate) drifting += f == drift::Fate::drifting;
  const double wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - wall0).count();
  std::printf(
      "RESULT side=cxx threads=%d particles=%zu steps=%u particle_steps=%llu step_s=%.4f step_cpu_s=%.4f prepare_s=%.4f "
      "wall_s=%.4f step_rate=%.4g settled=%llu died=%llu lost=%llu land_contacts=%llu drifting=%zu\n",
      o.threads, p.size(), o.steps, static_cast<unsigned long long>(total.particle_steps), step_s, step_cpu_s, prepare_s, wall,
      total.particle_steps / step_s, static_cast<unsigned long long>(total.settled),
      static_cast<unsigned long long>(total.died), static_cast<unsigned long long>(total.lost),
      static_cast<unsigned long long>(total.land_contacts), drifting);
  return 0;
} catch (const std::exception& e) {
  std::fprintf(stderr, "bench_drift_file: %s\n", e.what());
  return 3;
}
