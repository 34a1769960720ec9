// Curvilinear grids (CF-1.13 §5.2, 2-D lon/lat named in `coordinates`): a
// regular grid rotated by 30 degrees has parallelogram cells, so the bilinear
// cell map is affine and fields linear in lon and lat are reproduced exactly
// [D]. Written with ncgen.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>
#include <sstream>

#include "cullcast/currents/current_field.hpp"
#include "cullcast/currents/curvilinear_grid.hpp"
#include "currents_test_util.hpp"

using namespace cullcast;
using namespace cullcast::currents;
using namespace cullcast::currents::testing;

namespace {
constexpr double kTol_m_s = 2e-6;  // float storage
double fu(double lon, double lat) { return 0.2 * (lon - 150.0) - 0.3 * (lat + 20.0); }
double fv(double lon, double lat) { return 0.1 + 0.05 * (lon - 150.0) + 0.4 * (lat + 20.0); }

void rotated_node(int i, int j, double& lon, double& lat) {
  const double a = 30.0 * M_PI / 180.0, d = 0.05;
  lon = 150.0 + d * (i * std::cos(a) - j * std::sin(a));
  lat = -20.0 + d * (i * std::sin(a) + j * std::cos(a));
}

std::string rotated_cdl(int nx, int ny) {
  std::ostringstream c;
  c << "netcdf rotated {\ndimensions: time = 2 ; y = " << ny << " ; x = " << nx << " ;\nvariables:\n"
    << "  double time(time) ; time:units = \"hours since 2026-12-01\" ;\n"
    << "  double nav_lon(y, x) ; nav_lon:units = \"degrees_east\" ; nav_lon:standard_name = \"longitude\" ;\n"
    << "  double nav_lat(y, x) ; nav_lat:units = \"degrees_north\" ; nav_lat:standard_name = \"latitude\" ;\n"
    << "  float uo(time, y, x) ; uo:standard_name = \"eastward_sea_water_velocity\" ; uo:units = \"m s-1\" ; uo:coordinates = \"nav_lon nav_lat\" ;\n"
    << "  float vo(time, y, x) ; vo:standard_name = \"northward_sea_water_velocity\" ; vo:units = \"m s-1\" ; vo:coordinates = \"nav_lon nav_lat\" ;\n"
    << "data:\n  time = 0, 1 ;\n";
  std::vector<double> lon, lat;
  for (int j = 0; j < ny; ++j)
    for (int i = 0; i < nx; ++i) {
      double x, y;
      rotated_node(i, j, x, y);
      lon.push_back(x);
      lat.push_back(y);
    }
  c << "  nav_lon = " << join(lon) << " ;\n  nav_lat = " << join(lat) << " ;\n";
  std::vector<double> u, v;
  for (int t = 0; t < 2; ++t)
    for (size_t n = 0; n < lon.size(); ++n) { u.push_back(fu(lon[n], lat[n])); v.push_back(fv(lon[n], lat[n])); }
  c << "  uo = " << join(u) << " ;\n  vo = " << join(v) << " ;\n}\n";
  return c.str();
}
}  // namespace

TEST_CASE("curvilinear rotated grid: exact bilinear, cell search, outside", "[currents][curvilinear]") {
  ScratchDir dir;
  const int nx = 24, ny = 18;
  auto f = CurrentField::open_files({ncgen(dir, "rot", rotated_cdl(nx, ny))});
  REQUIRE(f.grid().kind == GridKind::curvilinear);
  CHECK(f.grid().nx == static_cast<size_t>(nx));
  f.prepare(f.time_begin_s(), f.time_end_s());
  std::mt19937 rng(7);
  std::uniform_real_distribution<double> ui(0.0, nx - 1.0), uj(0.0, ny - 1.0);
  int inside = 0;
  for (int n = 0; n < 2000; ++n) {
    // A point inside the grid, in grid index space, mapped to lon/lat.
    const double gi = ui(rng), gj = uj(rng);
    const double a = 30.0 * M_PI / 180.0, d = 0.05;
    const double lon = 150.0 + d * (gi * std::cos(a) - gj * std::sin(a));
    const double lat = -20.0 + d * (gi * std::sin(a) + gj * std::cos(a));
    const FlowSample s = f.sample(f.time_begin_s() + 1800, lon, lat, 0);
    INFO("lon " << lon << " lat " << lat);
    REQUIRE(s.status == SampleStatus::water);
    CHECK(s.u_m_s == Approx(fu(lon, lat)).margin(kTol_m_s));
    CHECK(s.v_m_s == Approx(fv(lon, lat)).margin(kTol_m_s));
    // Also given in 0..360 minus 360 (same place).
    CHECK(f.sample(f.time_begin_s(), lon - 360.0, lat, 0).status == SampleStatus::water);
    ++inside;
  }
  CHECK(inside == 2000);
  // Outside the rotated footprint but inside its bounding box: corner regions.
  double lon, lat;
  rotated_node(0, ny - 1, lon, lat);
  CHECK(f.status(lon - 0.01, lat - 0.3) == SampleStatus::outside);
  rotated_node(nx - 1, 0, lon, lat);
  CHECK(f.status(lon + 0.01, lat) == SampleStatus::outside);
}

TEST_CASE("curvilinear locator finds the cell and fractions of a distorted grid", "[currents][curvilinear]") {
  // A non-parallelogram grid (no folding): x = i + 0.03 i j, y = j + 0.01 i^2. Newton must
  // recover (i + fx, j + fy) from the mapped point.
  const int nx = 12, ny = 9;
  std::vector<double> lon, lat;
  auto map = [](double i, double j, double& x, double& y) {
    x = 100.0 + 0.1 * (i + 0.03 * i * j);
    y = -5.0 + 0.1 * (j + 0.01 * i * i);
  };
  for (int j = 0; j < ny; ++j)
    for (int i = 0; i < nx; ++i) {
      double x, y;
      map(i, j, x, y);
      lon.push_back(x);
      lat.push_back(y);
    }
  CurvilinearLocator loc(lon, lat, nx, ny);
  std::mt19937 rng(3);
  for (int n = 0; n < 500; ++n) {
    const int i = std::uniform_int_distribution<int>(0, nx - 2)(rng), j = std::uniform_int_distribution<int>(0, ny - 2)(rng);
    const double s = std::uniform_real_distribution<double>(0, 1)(rng), t = std::uniform_real_distribution<double>(0, 1)(rng);
    // Bilinear blend of the cell's corners at (s, t).
    const auto node = [&](int a, int b, bool want_lon) { return (want_lon ? lon : lat)[b * nx + a]; };
    const double x = (1 - s) * (1 - t) * node(i, j, true) + s * (1 - t) * node(i + 1, j, true) + (1 - s) * t * node(i, j + 1, true) + s * t * node(i + 1, j + 1, true);
    const double y = (1 - s) * (1 - t) * node(i, j, false) + s * (1 - t) * node(i + 1, j, false) + (1 - s) * t * node(i, j + 1, false) + s * t * node(i + 1, j + 1, false);
    CellHit hit;
    REQUIRE(loc.locate(x, y, hit));
    CHECK(hit.i + hit.fx == Approx(i + s).margin(1e-9));
    CHECK(hit.j + hit.fy == Approx(j + t).margin(1e-9));
  }
}
