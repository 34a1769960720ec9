// The grid stepper (production path on uniform regular grids) against the
// generic templated drift_step on the same real NetCDF currents, and against
// the exact displacement in a uniform current.
#include <catch2/catch.hpp>

#include <atomic>
#include <cmath>
#include <cstring>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <netcdf>
#include <omp.h>
#include <vector>

#include "../support/cf_axes.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/drift_step.hpp"
#include "cullcast/drift/grid_stepper.hpp"
#include "cullcast/drift/step_extras.hpp"
#include "cullcast/reefs/reef_lookup.hpp"

namespace fs = std::filesystem;
using namespace cullcast;

namespace {

constexpr double kPi = 3.14159265358979323846;

// A time-varying cellular flow with a tidal part and a square island, hourly
// frames, `nx` x `ny` nodes of `step_deg` from (lon0, lat0); or a uniform
// eastward current of `uniform_u` m/s when that is not 0.
fs::path write_flow(const fs::path& dir, std::size_t nx, std::size_t ny, double lon0, double lat0, double step_deg,
                    double uniform_u = 0.0, bool environment = false) {
  using namespace netCDF;
  fs::create_directories(dir);
  const fs::path file = dir / "flow.nc";
  NcFile f(file.string(), NcFile::replace, NcFile::nc4);
  const std::size_t nt = 13;
  const auto [t, y, x] = test::add_regular_axes(f, nt, ny, nx, lon0, lat0, step_deg);
  NcVar u = f.addVar("u", ncFloat, {t, y, x}), v = f.addVar("v", ncFloat, {t, y, x});
  u.putAtt("standard_name", "eastward_sea_water_velocity");
  v.putAtt("standard_name", "northward_sea_water_velocity");
  for (NcVar* var : {&u, &v}) {
    var->putAtt("units", "m s-1");
    var->putAtt("_FillValue", ncFloat, -999.0f);
  }
  std::vector<float> uu(nt * ny * nx), vv(nt * ny * nx);
  for (std::size_t k = 0; k < nt; ++k) {
    const double tide = std::cos(2 * kPi * static_cast<double>(k) / 12.42);
    for (std::size_t j = 0; j < ny; ++j) {
      for (std::size_t i = 0; i < nx; ++i) {
        const std::size_t n = (k * ny + j) * nx + i;
        const double a = 2 * kPi * static_cast<double>(i) / static_cast<double>(nx - 1);
        const double b = 2 * kPi * static_cast<double>(j) / static_cast<double>(ny - 1);
        const bool land = uniform_u == 0.0 && i > nx / 2 && i < nx / 2 + 4 && j > ny / 2 && j < ny / 2 + 4;
        if (land) {
          uu[n] = vv[n] = -999.0f;
        } else if (uniform_u != 0.0) {
          uu[n] = static_cast<float>(uniform_u);
          vv[n] = 0.0f;
        } else {
          uu[n] = static_cast<float>(0.3 * std::sin(b) * std::cos(a) + 0.1 * tide);
          vv[n] = static_cast<float>(-0.3 * std::cos(b) * std::sin(a) + 0.05 * tide);
        }
      }
    }
  }
  u.putVar(uu.data());
  v.putVar(vv.data());
  if (environment) {
    // Warmer to the east (24-32 degC, with a tidal swing), more chlorophyll
    // to the north (0.3-2.4 mg m-3): larvae develop and feed unevenly.
    NcVar temp = f.addVar("temp", ncFloat, {t, y, x}), chl = f.addVar("chl", ncFloat, {t, y, x});
    temp.putAtt("standard_name", "sea_water_temperature");
    temp.putAtt("units", "degC");
    chl.putAtt("standard_name", "mass_concentration_of_chlorophyll_a_in_sea_water");
    chl.putAtt("units", "mg m-3");
    for (std::size_t k = 0; k < nt; ++k) {
      const double tide = std::cos(2 * kPi * static_cast<double>(k) / 12.42);
      for (std::size_t j = 0; j < ny; ++j) {
        for (std::size_t i = 0; i < nx; ++i) {
          const std::size_t n = (k * ny + j) * nx + i;
          const double east = static_cast<double>(i) / static_cast<double>(nx - 1);
          const double north = static_cast<double>(j) / static_cast<double>(ny - 1);
          uu[n] = static_cast<float>(24.0 + 8.0 * east + 0.5 * tide);
          vv[n] = static_cast<float>(0.3 * std::exp2(3.0 * north));
        }
      }
    }
    temp.putVar(uu.data());
    chl.putVar(vv.data());
  }
  return file;
}

reefs::ReefSet one_reef(double lon, double lat, double half) {
  reefs::Reef reef;
  reef.id = "R";
  reef.name = "Test reef";
  reefs::Polygon poly;
  poly.outer = {{lon - half, lat - half}, {lon + half, lat - half}, {lon + half, lat + half},
                {lon - half, lat + half}, {lon - half, lat - half}};
  reef.parts.push_back(poly);
  reef.lon_min = lon - half, reef.lon_max = lon + half, reef.lat_min = lat - half, reef.lat_max = lat + half;
  reef.centroid = {lon, lat};
  return reefs::ReefSet({reef});
}

drift::ParticleSet grid_of_particles(double lon0, double lat0, double span, int side) {
  drift::ParticleSet p;
  p.resize(static_cast<std::size_t>(side * side));
  for (int a = 0; a < side; ++a) {
    for (int b = 0; b < side; ++b) {
      const auto i = static_cast<std::size_t>(a * side + b);
      p.lon[i] = lon0 + span * (a + 0.37) / side;
      p.lat[i] = lat0 + span * (b + 0.61) / side;
      p.index[i] = static_cast<std::uint32_t>(i);
      p.release_s[i] = static_cast<float>(600.0 * (i % 3));  // some join later
    }
  }
  return p;
}

struct Outcome {
  drift::ParticleSet p;
  std::uint64_t steps = 0;
};

// Competent after 72 minutes, for two days; 0.2 deaths per day.
study::LarvaeSettings test_larvae() {
  study::LarvaeSettings larvae;
  larvae.precompetent_days = 0.05;
  larvae.competent_days = 2.0;
  larvae.mortality_per_day = 0.2;
  return larvae;
}

Outcome run(bool grid, const fs::path& file, drift::ParticleSet p, drift::Scheme scheme, double kh,
            const reefs::ReefSet& reef_set, std::uint32_t steps, const drift::EarthModel& earth,
            drift::VectorIsa isa = drift::GridStepper::instruction_sets().back(), bool drop_kept_walk = false,
            const study::LarvaeSettings& larvae = test_larvae()) {
  currents::CurrentField field = currents::CurrentField::open_files({file.string()});
  const drift::LarvalClock clock(larvae);
  const reefs::ReefLookup lookup(reef_set, 0.0);
  const CounterRandom rng(11);
  drift::StepSettings s;
  s.event_start_s = field.time_begin_s();
  s.dt_s = 600;
  s.kh_m2_s = kh;
  s.scheme = scheme;
  drift::GridStepper stepper(field, earth);
  stepper.use_instruction_set(isa);
  REQUIRE(drift::GridStepper::applies(field, p));
  std::vector<std::uint8_t> now;
  Outcome out;
  for (std::uint32_t k = 0; k < steps; ++k) {
    const double t0 = s.event_start_s + k * s.dt_s;
    field.prepare(t0, t0 + s.dt_s);
    if (drop_kept_walk) p.walk_next_step = drift::ParticleSet::kNoWalkCache;  // every step draws afresh
    const auto tally = grid ? stepper.step(p, k, s, clock, lookup, rng, now)
                            : drift::drift_step(p, k, s, clock, earth, field, lookup, rng, now);
    out.steps += tally.particle_steps;
  }
  out.p = std::move(p);
  return out;
}

void compare(const Outcome& a, const Outcome& b, double tolerance_deg) {
  std::size_t same_fate = 0, close = 0;
  const std::size_t n = a.p.size();
  for (std::size_t i = 0; i < n; ++i) {
    if (a.p.fate[i] == b.p.fate[i]) ++same_fate;
    if (std::fabs(a.p.lon[i] - b.p.lon[i]) < tolerance_deg && std::fabs(a.p.lat[i] - b.p.lat[i]) < tolerance_deg) {
      ++close;
    } else if (std::getenv("CULLCAST_DEBUG_GRID")) {
      std::printf("%zu fate %d/%d lon %.9f %.9f lat %.9f %.9f\n", i, int(a.p.fate[i]), int(b.p.fate[i]), a.p.lon[i],
                  b.p.lon[i], a.p.lat[i], b.p.lat[i]);
    }
  }
  // The velocities are single precision and the order of interpolation
  // differs (time on the grid vs at the particle), so positions agree to
  // about 1e-7 of the distance travelled, not bit for bit; a particle grazing
  // the island or the edge may then decide differently: allow one in a thousand.
  CHECK(same_fate >= n - n / 1000);
  CHECK(close >= n - n / 1000);
}

}  // namespace

TEST_CASE("grid stepper follows the generic step on a fine grid (metric folded into the slices)") {
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-fine";
  const fs::path file = write_flow(dir, 81, 61, 150.0, -20.3, 0.01);
  const auto reef_set = one_reef(150.42, -20.0, 0.02);
  const auto earth = drift::EarthModel::sphere(6371000.0);
  for (const auto scheme : {drift::Scheme::rk4, drift::Scheme::rk2, drift::Scheme::euler}) {
    for (const double kh : {0.0, 2.0}) {
      INFO("scheme " << drift::scheme_name(scheme) << ", Kh " << kh);
      const auto start = grid_of_particles(150.05, -20.25, 0.5, 40);
      const Outcome fast = run(true, file, start, scheme, kh, reef_set, 60, earth);
      const Outcome generic = run(false, file, start, scheme, kh, reef_set, 60, earth);
      CHECK(fast.steps == generic.steps);
      compare(fast, generic, 1e-6);
    }
  }
  fs::remove_all(dir);
}

TEST_CASE("grid stepper follows the generic step on a coarse grid (exact metric per stage), WGS84") {
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-coarse";
  const fs::path file = write_flow(dir, 41, 31, 140.0, -40.0, 1.0);
  const auto reef_set = one_reef(162.0, -25.0, 0.5);
  const auto earth = drift::EarthModel::wgs84();
  const auto start = grid_of_particles(145.0, -35.0, 20.0, 30);
  const Outcome fast = run(true, file, start, drift::Scheme::rk4, 50.0, reef_set, 60, earth);
  const Outcome generic = run(false, file, start, drift::Scheme::rk4, 50.0, reef_set, 60, earth);
  CHECK(fast.steps == generic.steps);
  compare(fast, generic, 1e-6);
  fs::remove_all(dir);
}

namespace {

// Temperature and chlorophyll as the production study reads them (drift_run.cpp's FieldSources).
struct CurrentScalars {
  const currents::CurrentField* field;
  double kh(double, double, double) const noexcept { return std::nan(""); }  // constant Kh in these studies
  double kv(double, double, double) const noexcept { return std::nan(""); }
  double sea_floor_m(double, double) const noexcept { return HUGE_VAL; }
  double temperature_c(double t, double lon, double lat, double d) const noexcept {
    return field->sample_scalar(currents::ScalarKind::temperature, t, lon, lat, d);
  }
  double chlorophyll_mg_m3(double t, double lon, double lat, double d) const noexcept {
    return field->sample_scalar(currents::ScalarKind::chlorophyll, t, lon, lat, d);
  }
};

// Temperature- and food-dependent larvae through either path.
drift::ParticleSet run_developing(bool grid, const fs::path& file, drift::ParticleSet p,
                                  const reefs::ReefSet& reef_set, const std::string& mortality_as,
                                  drift::VectorIsa isa = drift::GridStepper::instruction_sets().back()) {
  currents::CurrentField field = currents::CurrentField::open_files({file.string()});
  field.enable_scalar(currents::ScalarKind::temperature);
  field.enable_scalar(currents::ScalarKind::chlorophyll);
  study::LarvaeSettings larvae;
  larvae.precompetent_days = 0.06;  // competent after 86 min at 28 degC
  larvae.competent_days = 1.0;
  larvae.mortality_per_day = 0.5;
  larvae.mortality_as = mortality_as;
  const drift::LarvalClock clock(larvae);
  const drift::LarvalEnvironment environment(larvae, true, true);
  const reefs::ReefLookup lookup(reef_set, 0.0);
  const CounterRandom rng(5);
  const auto earth = drift::EarthModel::sphere(6371000.0);
  drift::StepSettings s;
  s.event_start_s = field.time_begin_s();
  s.dt_s = 600;
  s.kh_m2_s = 1.0;
  const CurrentScalars scalars{&field};
  drift::StepExtras<CurrentScalars> extras;
  extras.fields = &scalars;
  extras.kh_m2_s = s.kh_m2_s;
  extras.environment = environment;
  drift::GridStepper stepper(field, earth);
  stepper.use_instruction_set(isa);
  p.enable_development();
  std::vector<std::uint8_t> now;
  for (std::uint32_t k = 0; k < 60; ++k) {
    const double t0 = s.event_start_s + k * s.dt_s;
    field.prepare(t0, t0 + s.dt_s);
    if (grid) {
      stepper.step(p, k, s, clock, lookup, rng, now, environment);
    } else {
      drift::drift_step(p, k, s, clock, earth, field, lookup, rng, now, extras);
    }
  }
  return p;
}

}  // namespace

TEST_CASE("grid stepper: temperature- and food-dependent larvae as in the generic step") {
  // Both paths apply one rule (development_step.hpp) to the temperature and
  // chlorophyll of the same file at the same positions, which agree to
  // rounding: development ages, food sums and weights then agree closely,
  // and fates except for larvae grazing the island, the reef or the edge.
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-environment";
  const fs::path file = write_flow(dir, 81, 61, 150.0, -20.3, 0.01, 0.0, true);
  const auto reef_set = one_reef(150.42, -20.0, 0.06);
  const auto start = grid_of_particles(150.05, -20.25, 0.5, 40);
  for (const std::string mortality_as : {"weight", "random"}) {
    INFO("mortality as " << mortality_as);
    const drift::ParticleSet fast = run_developing(true, file, start, reef_set, mortality_as);
    const drift::ParticleSet generic = run_developing(false, file, start, reef_set, mortality_as);
    const std::size_t n = start.size();
    std::size_t same_fate = 0, same_development = 0, same_food = 0, same_weight = 0, settled = 0, ahead = 0,
                behind = 0;
    for (std::size_t i = 0; i < n; ++i) {
      same_fate += fast.fate[i] == generic.fate[i];
      same_development += std::fabs(fast.development_s[i] - generic.development_s[i]) <= 1e-3f * generic.development_s[i] + 1;
      same_food += std::fabs(fast.food_log2_s[i] - generic.food_log2_s[i]) <= 1e-3f * std::fabs(generic.food_log2_s[i]) + 1;
      same_weight += std::fabs(fast.weight[i] - generic.weight[i]) <= 1e-6;
      settled += fast.fate[i] == drift::Fate::settled;
      // Development must really follow the water: warm larvae ahead of
      // their calendar age, cool ones behind (else the check is empty).
      if (fast.fate[i] == drift::Fate::drifting) {
        const double age = 60 * 600.0 - fast.release_s[i];
        ahead += fast.development_s[i] > 1.1 * age;
        behind += fast.development_s[i] < 0.9 * age;
      }
    }
    CHECK(same_fate >= n - n / 200);
    CHECK(same_development >= n - n / 200);
    CHECK(same_food >= n - n / 200);
    CHECK(same_weight >= n - n / 200);
    CHECK(settled > 10);
    CHECK(ahead > 50);
    CHECK(behind > 50);
    // Every instruction set's batched conditions give the same bits.
    for (const drift::VectorIsa isa : drift::GridStepper::instruction_sets()) {
      INFO("instruction set " << drift::GridStepper::isa_name(isa));
      const drift::ParticleSet other = run_developing(true, file, start, reef_set, mortality_as, isa);
      std::size_t differ = 0;
      for (std::size_t i = 0; i < n; ++i) {
        differ += std::memcmp(&fast.lon[i], &other.lon[i], sizeof(double)) != 0 ||
                  std::memcmp(&fast.weight[i], &other.weight[i], sizeof(double)) != 0 ||
                  fast.development_s[i] != other.development_s[i] || fast.food_log2_s[i] != other.food_log2_s[i] ||
                  fast.fate[i] != other.fate[i];
      }
      CHECK(differ == 0);
    }
  }
  fs::remove_all(dir);
}

TEST_CASE("grid stepper: reefs and larvae numbered 360 degrees west of the currents settle as in the generic step") {
  // The stepper skips the reef look-up where no reef can lie near the node a
  // larva ends at (GridStepper::mark_reef_nodes); that test must also hold
  // for reefs given in another longitude numbering than the currents.
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-reef-numbering";
  const fs::path file = write_flow(dir, 81, 61, 150.0, -20.3, 0.01);
  const auto reef_set = one_reef(150.42 - 360.0, -20.0, 0.02);
  const auto earth = drift::EarthModel::sphere(6371000.0);
  const auto start = grid_of_particles(150.05 - 360.0, -20.25, 0.5, 40);
  const Outcome fast = run(true, file, start, drift::Scheme::rk4, 2.0, reef_set, 60, earth);
  const Outcome generic = run(false, file, start, drift::Scheme::rk4, 2.0, reef_set, 60, earth);
  CHECK(fast.steps == generic.steps);
  compare(fast, generic, 1e-6);
  std::size_t settled_fast = 0, settled_generic = 0;
  for (std::size_t i = 0; i < start.size(); ++i) {
    settled_fast += fast.p.fate[i] == drift::Fate::settled;
    settled_generic += generic.p.fate[i] == drift::Fate::settled;
  }
  CHECK(settled_fast > 5);  // the reef is reached
  CHECK(settled_fast + 1 >= settled_generic);
  CHECK(settled_generic + 1 >= settled_fast);
  fs::remove_all(dir);
}

TEST_CASE("grid stepper: larvae given west of the antimeridian on a grid numbered 175..185 E") {
  // Longitudes are wrapped into the grid's numbering only where needed
  // (grid_lanes.hpp, cell()): larvae at -179.6..-175.6 E (= 180.4..184.4 E)
  // on a regular grid from 175 E must move as the generic step moves them;
  // larvae in the grid's own numbering take the unwrapped path, and both
  // numberings of one position must give the same move.
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-antimeridian";
  const fs::path file = write_flow(dir, 81, 61, 175.0, -20.3, 0.125);
  // The reef lies off the grid: a reef is found in its own numbering, so
  // one in either would tell the two numberings apart.
  const auto reef_set = one_reef(10.0, 10.0, 0.2);
  const auto earth = drift::EarthModel::sphere(6371000.0);
  const auto west = grid_of_particles(-179.6, -19.5, 4.0, 30);
  const Outcome fast = run(true, file, west, drift::Scheme::rk4, 5.0, reef_set, 60, earth);
  const Outcome generic = run(false, file, west, drift::Scheme::rk4, 5.0, reef_set, 60, earth);
  CHECK(fast.steps == generic.steps);
  compare(fast, generic, 1e-6);
  auto east = west;
  for (double& lon : east.lon) lon += 360.0;
  const Outcome fast_east = run(true, file, east, drift::Scheme::rk4, 5.0, reef_set, 60, earth);
  std::size_t drifting = 0, same = 0;
  for (std::size_t i = 0; i < west.size(); ++i) {
    drifting += fast.p.fate[i] == drift::Fate::drifting;
    // The two numberings round differently (x - 175 vs x + 360 - 175), so
    // the moves agree to rounding, not bit for bit.
    same += fast.p.fate[i] == fast_east.p.fate[i] && std::fabs(fast.p.lon[i] + 360.0 - fast_east.p.lon[i]) < 1e-9 &&
            std::fabs(fast.p.lat[i] - fast_east.p.lat[i]) < 1e-9;
  }
  CHECK(drifting > west.size() / 2);  // most stay on the grid: the wrapped path really ran
  CHECK(same >= west.size() - west.size() / 1000);
  fs::remove_all(dir);
}

TEST_CASE("grid stepper: weights, settlement and death at the end of competency as in the generic step") {
  // Competent from 1/64 to 1/16 of a day (1350-5400 s, exact in binary):
  // over 9 steps of 600 s, larvae released at 0 reach the end of competency
  // exactly at the last step's end, and die there (age >= the end); those
  // released 600 s later are still drifting. Most batches end in open water
  // or near the reef but not competent, the rest over it while competent.
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-ends";
  const fs::path file = write_flow(dir, 81, 61, 150.0, -20.3, 0.01);
  const auto reef_set = one_reef(150.42, -20.0, 0.05);
  const auto earth = drift::EarthModel::sphere(6371000.0);
  study::LarvaeSettings larvae = test_larvae();
  larvae.precompetent_days = 1.0 / 64;
  larvae.competent_days = 3.0 / 64;
  larvae.mortality_per_day = 0.2;
  const std::uint32_t steps = 9;
  const auto start = grid_of_particles(150.05, -20.25, 0.5, 40);
  const Outcome fast =
      run(true, file, start, drift::Scheme::rk4, 0.0, reef_set, steps, earth, drift::GridStepper::instruction_sets().back(),
          false, larvae);
  const Outcome generic = run(false, file, start, drift::Scheme::rk4, 0.0, reef_set, steps, earth,
                              drift::GridStepper::instruction_sets().back(), false, larvae);
  compare(fast, generic, 1e-6);
  const std::size_t n = start.size();
  std::size_t same_weight = 0, settled = 0, old_age = 0, drifting = 0;
  for (std::size_t i = 0; i < n; ++i) {
    // Both paths decay weights by one factor per step: the same bits.
    if (fast.p.weight[i] == generic.p.weight[i]) ++same_weight;
    const double release = start.release_s[i];
    if (fast.p.fate[i] == drift::Fate::settled) ++settled;
    if (fast.p.fate[i] == drift::Fate::died) {
      ++old_age;
      INFO("particle " << i << " released at " << release << " s");
      CHECK(release == 0.0);  // only those reach the end of competency
    }
    if (fast.p.fate[i] == drift::Fate::drifting) {
      ++drifting;
      INFO("particle " << i << " released at " << release << " s");
      CHECK(release > 0.0);
      // Constant hazard m: survival exp(-m·age) (the exponential special case
      // of the Weibull survival in Connolly & Baird 2010, Ecology 91:3572-3583).
      const double age = steps * 600.0 - release;
      CHECK(fast.p.weight[i] == Approx(std::exp(-0.2 / 86400.0 * age)).epsilon(1e-12));
    }
  }
  CHECK(same_weight >= n - n / 1000);
  CHECK(settled > 0);
  CHECK(old_age > n / 4);
  CHECK(drifting > n / 4);
  fs::remove_all(dir);
}

TEST_CASE("grid stepper: uniform eastward current gives the exact displacement on the sphere") {
  // Analytic: a current u along a parallel moves a particle by u·t metres,
  // i.e. u·t / (R·cos φ) radians of longitude, latitude unchanged.
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-uniform";
  const double u = 0.25;
  const fs::path file = write_flow(dir, 101, 41, 150.0, -20.4, 0.01, u);
  const auto reef_set = one_reef(151.5, -19.0, 0.01);  // out of the way
  const double radius = 6371000.0;
  const auto earth = drift::EarthModel::sphere(radius);
  drift::ParticleSet start;
  start.resize(5);
  for (std::size_t i = 0; i < 5; ++i) {
    start.lon[i] = 150.1;
    start.lat[i] = -20.35 + 0.07 * static_cast<double>(i);
    start.index[i] = static_cast<std::uint32_t>(i);
  }
  const std::uint32_t steps = 36;  // 6 hours
  const Outcome fast = run(true, file, start, drift::Scheme::rk4, 0.0, reef_set, steps, earth);
  for (std::size_t i = 0; i < 5; ++i) {
    const double lat = start.lat[i] * kPi / 180.0;
    const double expected = 150.1 + u * 600.0 * steps / (radius * std::cos(lat)) * 180.0 / kPi;
    INFO("particle at latitude " << start.lat[i]);
    // float currents (u is exactly representable), folded metric: 1e-7 relative
    // of the displacement at most.
    CHECK(fast.p.lon[i] == Approx(expected).margin(1e-7 * (expected - 150.1)));
    CHECK(fast.p.lat[i] == Approx(start.lat[i]).margin(1e-12));
  }
  fs::remove_all(dir);
}

TEST_CASE("grid stepper: a side job runs once per step on one of its threads; its error comes after the step") {
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-side-job";
  const fs::path file = write_flow(dir, 81, 61, 150.0, -20.3, 0.01);
  const auto reef_set = one_reef(150.42, -20.0, 0.02);
  const reefs::ReefLookup lookup(reef_set, 0.0);
  currents::CurrentField field = currents::CurrentField::open_files({file.string()});
  const auto earth = drift::EarthModel::sphere(6371000.0);
  study::LarvaeSettings larvae;
  larvae.precompetent_days = 0.05;
  const drift::LarvalClock clock(larvae);
  const CounterRandom rng(5);
  drift::StepSettings s;
  s.event_start_s = field.time_begin_s();
  s.dt_s = 600;
  s.kh_m2_s = 20;
  drift::GridStepper with(field, earth), without(field, earth);
  drift::ParticleSet a = grid_of_particles(150.05, -20.25, 0.5, 80), b = a;  // 6400: a parallel step
  std::vector<std::uint8_t> now_a, now_b;
  const drift::LarvalEnvironment environment(larvae, false, false);
  const int threads = omp_get_max_threads();
  omp_set_num_threads(2);
  std::atomic<int> calls{0};
  for (std::uint32_t k = 0; k < 12; ++k) {
    const double t0 = s.event_start_s + k * s.dt_s;
    field.prepare(t0, t0 + s.dt_s);
    const auto side_job = [&calls, k] {
      ++calls;
      if (k == 7) throw InputError("side job failed at step 7");
    };
    if (k == 7) {
      CHECK_THROWS_WITH(with.step(a, k, s, clock, lookup, rng, now_a, environment, side_job),
                        "side job failed at step 7");
    } else {
      with.step(a, k, s, clock, lookup, rng, now_a, environment, side_job);
    }
    without.step(b, k, s, clock, lookup, rng, now_b, environment);
    REQUIRE(calls == static_cast<int>(k) + 1);
    // The step itself was done in full, error or not: the same bits as without the job.
    REQUIRE(std::memcmp(a.lon.data(), b.lon.data(), a.size() * sizeof(double)) == 0);
    REQUIRE(std::memcmp(a.lat.data(), b.lat.data(), a.size() * sizeof(double)) == 0);
    REQUIRE(a.fate == b.fate);
    REQUIRE(now_a == now_b);
  }
  omp_set_num_threads(threads);
  fs::remove_all(dir);
}

TEST_CASE("grid stepper: every instruction set gives the same bits (no FMA contraction, IEEE operations only)") {
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-isa";
  const auto reef_set = one_reef(150.42, -20.0, 0.02);
  const std::vector<drift::VectorIsa> sets = drift::GridStepper::instruction_sets();
  INFO("instruction sets on this processor: " << sets.size());
  // Fine grid (metric folded) and coarse WGS84 grid (metric per stage, with
  // lanes leaving the rows), both with the random walk.
  struct Case {
    std::size_t nx, ny;
    double lon0, lat0, step;  // grid
    double start_lon, start_lat, span;  // particles
    drift::EarthModel earth;
  };
  for (const Case& c : {Case{81, 61, 150.0, -20.3, 0.01, 150.05, -20.25, 0.5, drift::EarthModel::sphere(6371000.0)},
                        Case{41, 31, 140.0, -40.0, 1.0, 140.2, -39.8, 39.7, drift::EarthModel::wgs84()}}) {
    const fs::path file = write_flow(dir, c.nx, c.ny, c.lon0, c.lat0, c.step);
    const auto start = grid_of_particles(c.start_lon, c.start_lat, c.span, 30);
    const Outcome base = run(true, file, start, drift::Scheme::rk4, 50.0, reef_set, 40, c.earth,
                             drift::VectorIsa::baseline);
    for (const drift::VectorIsa isa : sets) {
      INFO("instruction set " << drift::GridStepper::isa_name(isa) << ", grid step " << c.step);
      const Outcome other = run(true, file, start, drift::Scheme::rk4, 50.0, reef_set, 40, c.earth, isa);
      REQUIRE(other.steps == base.steps);
      std::size_t differ = 0;
      for (std::size_t i = 0; i < base.p.size(); ++i) {
        differ += std::memcmp(&base.p.lon[i], &other.p.lon[i], sizeof(double)) != 0 ||
                  std::memcmp(&base.p.lat[i], &other.p.lat[i], sizeof(double)) != 0 ||
                  base.p.weight[i] != other.p.weight[i] || base.p.fate[i] != other.p.fate[i] ||
                  base.p.reef[i] != other.p.reef[i];
      }
      CHECK(differ == 0);
    }
  }
  fs::remove_all(dir);
}

TEST_CASE("grid stepper: CULLCAST_VECTOR_ISA caps the instruction set and rejects unknown names") {
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-isa-env";
  const fs::path file = write_flow(dir, 21, 21, 150.0, -20.3, 0.01);
  currents::CurrentField field = currents::CurrentField::open_files({file.string()});
  const auto earth = drift::EarthModel::sphere(6371000.0);
  ::setenv("CULLCAST_VECTOR_ISA", "baseline", 1);
  CHECK(drift::GridStepper(field, earth).instruction_set() == drift::VectorIsa::baseline);
  ::setenv("CULLCAST_VECTOR_ISA", "avx512", 1);  // a cap, not a demand: never above what the processor has
  CHECK(drift::GridStepper(field, earth).instruction_set() == drift::GridStepper::instruction_sets().back());
  ::setenv("CULLCAST_VECTOR_ISA", "sse9", 1);
  CHECK_THROWS_WITH(drift::GridStepper(field, earth),
                    Catch::Contains("CULLCAST_VECTOR_ISA") && Catch::Contains("expected baseline, avx2 or avx512"));
  ::unsetenv("CULLCAST_VECTOR_ISA");
  fs::remove_all(dir);
}

TEST_CASE("grid stepper: walk deviates kept from the even step are the ones an odd step would draw") {
  // Larvae join at steps 0, 1 and 2 (grid_of_particles), so odd steps mix
  // kept deviates with fresh draws; dropping the kept ones every step must
  // give the same bits.
  const fs::path dir = fs::temp_directory_path() / "cullcast-grid-stepper-kept-walk";
  const fs::path file = write_flow(dir, 81, 61, 150.0, -20.3, 0.01);
  const auto reef_set = one_reef(150.42, -20.0, 0.02);
  const auto earth = drift::EarthModel::sphere(6371000.0);
  const auto start = grid_of_particles(150.05, -20.25, 0.5, 30);
  const Outcome kept = run(true, file, start, drift::Scheme::rk4, 20.0, reef_set, 41, earth);
  const Outcome fresh = run(true, file, start, drift::Scheme::rk4, 20.0, reef_set, 41, earth,
                            drift::GridStepper::instruction_sets().back(), true);
  REQUIRE(kept.steps == fresh.steps);
  std::size_t differ = 0;
  for (std::size_t i = 0; i < start.size(); ++i) {
    differ += std::memcmp(&kept.p.lon[i], &fresh.p.lon[i], sizeof(double)) != 0 ||
              std::memcmp(&kept.p.lat[i], &fresh.p.lat[i], sizeof(double)) != 0 ||
              kept.p.fate[i] != fresh.p.fate[i];
  }
  CHECK(differ == 0);
  // The walk moved them: the kept deviates were used, not zeros.
  const Outcome still = run(true, file, start, drift::Scheme::rk4, 0.0, reef_set, 41, earth);
  std::size_t moved = 0;
  for (std::size_t i = 0; i < start.size(); ++i) moved += kept.p.lon[i] != still.p.lon[i];
  CHECK(moved > start.size() / 2);
  fs::remove_all(dir);
}
