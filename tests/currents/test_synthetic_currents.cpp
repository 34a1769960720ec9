// Synthetic currents written by write_synthetic_currents() and read back with
// CurrentField, checked against the formulas (uniform; double gyre of Shadden,
// Lekien & Marsden 2005, Physica D 212:271-304, re-typed here from the paper's
// equations) and, for the packed demo set, against python3-netCDF4's own
// unpacking (netCDF4-python applies scale_factor/add_offset/_FillValue itself).
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <iterator>
#include <numbers>
#include <utility>
#include <vector>

#include "cullcast/currents/current_field.hpp"
#include "cullcast/currents/synthetic_currents.hpp"
#include "currents_test_util.hpp"

using namespace cullcast;
using namespace cullcast::currents;
using namespace cullcast::currents::testing;

namespace {
constexpr double kPackTol_m_s = 0.5e-4 + 1e-6;  // half a packed unit (scale_factor 1e-4) plus float storage

std::vector<std::string> as_strings(const std::vector<std::filesystem::path>& v) {
  std::vector<std::string> out;
  for (const auto& p : v) out.push_back(p.string());
  return out;
}
}  // namespace

TEST_CASE("synthetic uniform flow reads back exactly", "[currents][synthetic]") {
  ScratchDir dir;
  SyntheticOptions o;
  o.kind = SyntheticKind::uniform;
  o.days = 2;
  o.days_per_file = 1;
  const auto files = write_synthetic_currents(dir.path(), o);
  REQUIRE(files.size() == 2);
  auto f = CurrentField::open_files(as_strings(files));
  CHECK(f.frame_count() == 49);  // hourly over 2 days; the shared boundary frame de-duplicated
  CHECK(f.gaps().empty());
  CHECK(f.format_time(f.time_begin_s()) == "2026-12-01T00:00:00Z");
  f.prepare(f.time_begin_s() + 20 * 3600, f.time_begin_s() + 30 * 3600);
  const FlowSample s = f.sample(f.time_begin_s() + 25.5 * 3600, 150.333, -20.111, 0);
  CHECK(s.status == SampleStatus::water);
  CHECK(s.u_m_s == Approx(0.10).margin(kPackTol_m_s));
  CHECK(s.v_m_s == Approx(0.05).margin(kPackTol_m_s));
}

TEST_CASE("synthetic double gyre matches Shadden et al. (2005) at the nodes", "[currents][synthetic]") {
  ScratchDir dir;
  SyntheticOptions o;
  o.kind = SyntheticKind::double_gyre;
  o.days = 0.5;
  auto f = CurrentField::open_files(as_strings(write_synthetic_currents(dir.path(), o)));
  f.prepare(f.time_begin_s(), f.time_end_s());
  const double pi = std::numbers::pi, A = 0.1, eps = 0.25, omega = 2 * pi / 10;
  const double lat_mid = -20.2, R = 6371000.0;
  const double L = (0.4) * pi / 180 * R;  // box height, metres = one length unit
  const double T = L;                      // time unit, s (velocity unit 1 m/s)
  int checked = 0;
  for (int hour : {0, 3, 7}) {
    for (int i = 0; i <= 80; i += 8)
      for (int j = 0; j <= 40; j += 5) {
        const double lon = 150.0 + 0.01 * i, lat = -20.4 + 0.01 * j;
        const double x = (lon - 150.0) * pi / 180 * R * std::cos(lat_mid * pi / 180) / L;
        const double y = (lat + 20.4) * pi / 180 * R / L;
        if (x > 2.0) continue;
        const double t = hour * 3600.0 / T;
        const double a = eps * std::sin(omega * t), b = 1 - 2 * eps * std::sin(omega * t);
        const double fx = a * x * x + b * x;
        const double u = -pi * A * std::sin(pi * fx) * std::cos(pi * y);
        const double v = pi * A * std::cos(pi * fx) * std::sin(pi * y) * (2 * a * x + b);
        const FlowSample s = f.sample(f.time_begin_s() + hour * 3600.0, lon, lat, 0);
        INFO("lon " << lon << " lat " << lat << " hour " << hour);
        CHECK(s.u_m_s == Approx(u).margin(kPackTol_m_s));
        CHECK(s.v_m_s == Approx(v).margin(kPackTol_m_s));
        ++checked;
      }
  }
  CHECK(checked > 100);
  // [D] no normal flow through the walls y = 0 and y = 1: v = 0 there.
  CHECK(f.sample(f.time_begin_s(), 150.3, -20.4, 0).v_m_s == Approx(0).margin(kPackTol_m_s));
}

TEST_CASE("demo set: multi-file, land, scalars, and unpacking agrees with python3-netCDF4", "[currents][synthetic]") {
  ScratchDir dir;
  SyntheticOptions o;
  o.days = 3;
  o.days_per_file = 1;
  const auto files = write_synthetic_currents(dir.path(), o);
  REQUIRE(files.size() == 3);
  auto f = CurrentField::open_files(as_strings(files));
  CHECK(f.frame_count() == 73);
  CHECK(f.grid().nz == 3);
  CHECK(f.grid().land_fraction > 0.003);  // two islands of 1.8 km radius in a 63 x 44 km box
  CHECK(f.grid().land_fraction < 0.2);
  CHECK(f.status(150.15, -20.20) == SampleStatus::land);  // the main island (invented)
  CHECK(f.status(150.05, -20.38) == SampleStatus::water);
  REQUIRE(f.has_scalar(ScalarKind::temperature));
  f.enable_scalar(ScalarKind::temperature);
  f.enable_scalar(ScalarKind::chlorophyll);
  const double t = f.time_begin_s() + 37 * 3600.0;  // a node time: no time interpolation
  f.prepare(t, t);
  const double temp = f.sample_scalar(ScalarKind::temperature, t, 150.2, -20.3, 0);
  CHECK(temp > 25.0);
  CHECK(temp < 31.0);
  CHECK(f.sample_scalar(ScalarKind::chlorophyll, t, 150.2, -20.3, 0) > 0.0);
  if (std::system("/usr/bin/python3 -c 'import netCDF4' 2>/dev/null") != 0) {
    WARN("python3-netCDF4 not installed: unpacking cross-check skipped");
    return;
  }
  // Node (depth 1, lat index 12, lon index 33) of hour 37 = file 2, index 13.
  const std::string cmd = "/usr/bin/python3 -c \"import netCDF4; d = netCDF4.Dataset('" + files[1].string() +
                          "'); print(repr(float(d['u'][13, 1, 12, 33])), repr(float(d['v'][13, 1, 12, 33])), "
                          "repr(float(d['temp'][13, 1, 12, 33])))\"";
  FILE* p = ::popen(cmd.c_str(), "r");
  REQUIRE(p != nullptr);
  double u = 0, v = 0, tc = 0;
  const int got = std::fscanf(p, "%lf %lf %lf", &u, &v, &tc);
  ::pclose(p);
  REQUIRE(got == 3);
  const FlowSample s = f.sample(t, 150.33, -20.28, 10.0);
  CHECK(s.u_m_s == Approx(u).margin(1e-6));
  CHECK(s.v_m_s == Approx(v).margin(1e-6));
  CHECK(f.sample_scalar(ScalarKind::temperature, t, 150.33, -20.28, 10.0) == Approx(tc).margin(1e-5));
}

TEST_CASE("scalar slices give sample_scalar's values at any point, beside islands and between levels",
          "[currents][synthetic]") {
  // [D] scalar_slice() keeps, per node, the depth-weighted sum and weight of
  // the known values; FlowSampler::from_scalar_slice()'s bilinear weights over
  // a cell then give the same renormalised mean as sample_scalar()
  // (current_field.hpp), up to rounding.
  ScratchDir dir;
  SyntheticOptions o;
  o.kind = SyntheticKind::demo;
  o.days = 2;
  o.days_per_file = 2;
  const auto files = write_synthetic_currents(dir.path(), o);
  auto f = CurrentField::open_files(as_strings(files));
  f.enable_scalar(ScalarKind::temperature);
  f.enable_scalar(ScalarKind::chlorophyll);
  const double t = f.time_begin_s() + 20.4 * 3600.0;  // between frames
  f.prepare(t, t + 600);
  const FlowSampler& g = f.sampler();
  std::size_t compared = 0, unknown = 0;
  std::vector<float> slice;
  for (const ScalarKind kind : {ScalarKind::temperature, ScalarKind::chlorophyll}) {
    for (const double depth : {0.0, 3.7, 10.0, 200.0}) {
      REQUIRE(f.scalar_slice(kind, t, depth, slice));
      REQUIRE(slice.size() == static_cast<std::size_t>(2 * g.nx * g.ny));
      // A fine lattice over the main island and its coast, and open water.
      std::vector<double> lons, lats;
      for (double lon = 150.10; lon <= 150.21; lon += 0.0037) {
        for (double lat = -20.26; lat <= -20.15; lat += 0.0041) {
          lons.push_back(lon), lats.push_back(lat);
          const double expected = f.sample_scalar(kind, t, lon, lat, depth);
          const double from_slice = g.from_scalar_slice(slice.data(), lon, lat);
          INFO("lon " << lon << " lat " << lat << " depth " << depth);
          if (std::isnan(expected)) {
            CHECK(std::isnan(from_slice));
            ++unknown;
          } else {
            CHECK(from_slice == Approx(expected).epsilon(1e-6));
            ++compared;
          }
        }
      }
      // The batched form (the grid stepper's, points located first) gives
      // the point form's bits, also on the grid's first and last nodes, off
      // the grid and at NaN.
      const double nan = std::nan("");
      for (const auto& [lon, lat] : {std::pair{g.lon_first, g.lat_first}, std::pair{g.lon_last, g.lat_last},
                                     std::pair{g.lon_last, g.lat_first}, std::pair{g.lon_first - 0.01, g.lat_first},
                                     std::pair{150.15, g.lat_last + 0.01}, std::pair{nan, -20.2},
                                     std::pair{150.15, nan}}) {
        lons.push_back(lon), lats.push_back(lat);
      }
      std::vector<CellHit> hits(lons.size());
      for (std::size_t k = 0; k < lons.size(); ++k) g.locate(lons[k], lats[k], hits[k]);
      std::vector<double> batched(lons.size());
      g.from_scalar_slice(slice.data(), hits.data(), static_cast<int>(lons.size()), batched.data());
      std::size_t differ = 0;
      for (std::size_t k = 0; k < lons.size(); ++k) {
        const double point = g.from_scalar_slice(slice.data(), lons[k], lats[k]);
        differ += std::isnan(point) ? !std::isnan(batched[k])
                                    : std::memcmp(&point, &batched[k], sizeof point) != 0;
      }
      CHECK(differ == 0);
    }
  }
  CHECK(compared > 1000);
  CHECK(unknown > 10);  // inside the island: every surrounding node is land
  CHECK_FALSE(f.scalar_slice(ScalarKind::temperature, f.time_end_s() + 3600.0, 0.0, slice));  // not prepared
}

namespace {
std::string file_bytes(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}
}  // namespace

TEST_CASE("demo set over two seasons: one year apart, a gap between, other weather, deterministic",
          "[currents][synthetic][seasons]") {
  ScratchDir dir;
  SyntheticOptions o;
  o.days = 1;
  o.days_per_file = 1;
  o.seasons = 2;
  const auto files = write_synthetic_currents(dir.path() / "both", o);
  REQUIRE(files.size() == 2);
  CHECK(files[0].filename() == "lantern_reach_20261201.nc");
  CHECK(files[1].filename() == "lantern_reach_20271201.nc");
  auto f = CurrentField::open_files(as_strings(files));
  CHECK(f.frame_count() == 50);
  REQUIRE(f.gaps().size() == 1);
  CHECK(f.format_time(f.gaps()[0].from_s) == "2026-12-02T00:00:00Z");
  CHECK(f.format_time(f.gaps()[0].to_s) == "2027-12-01T00:00:00Z");
  CHECK(f.stretch_end_s(f.time_begin_s()) == f.gaps()[0].from_s);

  // The same hour of each season: the currents differ (other drift, lagoon cell and eddies).
  const double year_s = f.gaps()[0].to_s - f.time_begin_s();
  double largest = 0;
  for (double hour : {3.0, 12.0, 20.0}) {
    const double t0 = f.time_begin_s() + hour * 3600.0, t1 = t0 + year_s;
    for (double lon = 150.02; lon < 150.6; lon += 0.05)
      for (double lat = -20.38; lat < -20.0; lat += 0.05) {
        f.prepare(t0, t0);
        const FlowSample a = f.sample(t0, lon, lat, 0);
        f.prepare(t1, t1);
        const FlowSample b = f.sample(t1, lon, lat, 0);
        if (a.status != SampleStatus::water || b.status != SampleStatus::water) continue;
        largest = std::max(largest, std::hypot(a.u_m_s - b.u_m_s, a.v_m_s - b.v_m_s));
      }
  }
  CHECK(largest > 0.05);  // m/s; the tides alone are the same in both seasons

  // Deterministic: the first season alone, and the second written on its own,
  // give the same bytes as the two-season set.
  SyntheticOptions first = o;
  first.seasons = 1;
  const auto only_first = write_synthetic_currents(dir.path() / "first", first);
  SyntheticOptions second = first;
  second.season = 1;
  second.start.year = 2027;
  const auto only_second = write_synthetic_currents(dir.path() / "second", second);
  REQUIRE(only_first.size() == 1);
  REQUIRE(only_second.size() == 1);
  CHECK(file_bytes(only_first[0]) == file_bytes(files[0]));
  CHECK(file_bytes(only_second[0]) == file_bytes(files[1]));
  CHECK(file_bytes(files[0]) != file_bytes(files[1]));
}
