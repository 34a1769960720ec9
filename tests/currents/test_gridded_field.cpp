// Time-invariant gridded fields beside the currents: diffusivities found by
// CF standard name (CF-1.13 standard name table v77:
// ocean_tracer_xy_laplacian_diffusivity, ocean_vertical_tracer_diffusivity),
// interpolation, and the sea floor from a velocity mask. Files via ncgen.
#include <catch2/catch.hpp>

#include <cmath>

#include "cullcast/base/error.hpp"
#include "cullcast/currents/gridded_field.hpp"
#include "currents_test_util.hpp"

using namespace cullcast;
using namespace cullcast::currents;
using namespace cullcast::currents::testing;
using Catch::Matchers::Contains;

namespace {

RegularSpec with_diffusivity(const std::string& kh_units = "m2 s-1") {
  RegularSpec s;
  s.lon = {150.0, 150.1, 150.2};
  s.lat = {-20.0, -19.9};
  s.depth = {0.0, 10.0, 30.0};
  s.time = {0.0, 1.0};
  s.u = [](double, double, double, double) { return 0.1; };
  // Column (lat -19.9, lon 150.2) is dry below 10 m; (lat -20, lon 150) is land.
  s.land = [](double d, double la, double lo) {
    return (la < -19.95 && lo < 150.05) || (la > -19.95 && lo > 150.15 && d > 5);
  };
  s.extra_variables =
      "  float kh(lat, lon) ;\n    kh:standard_name = \"ocean_tracer_xy_laplacian_diffusivity\" ;\n"
      "    kh:units = \"" + kh_units + "\" ;\n"
      "  float kv(time, depth, lat, lon) ;\n    kv:standard_name = \"ocean_vertical_tracer_diffusivity\" ;\n"
      "    kv:units = \"m2 s-1\" ;\n    kv:scale_factor = 0.001f ;\n";
  s.extra_data = "  kh = 1, 2, 3, 4, 5, 6 ;\n  kv = 1, 1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 2, 4, 4, 4, 4, 4, 4,"
                 " 9, 9, 9, 9, 9, 9, 9, 9, 9, 9, 9, 9, 9, 9, 9, 9, 9, 9 ;\n";
  return s;
}

}  // namespace

TEST_CASE("gridded field: diffusivities by standard name, bilinear and linear in depth") {
  ScratchDir dir;
  const std::string file = ncgen(dir, "k", regular_cdl(with_diffusivity()));
  const auto kh = GriddedField::read(file, "", "ocean_tracer_xy_laplacian_diffusivity");
  CHECK(kh.nx() == 3);
  CHECK(kh.nz() == 1);
  CHECK(kh.sample(150.1, -20.0, 0) == Approx(2.0));
  // Bilinear: centre of the cell (150.05, -19.95) averages 1, 2, 4, 5.
  CHECK(kh.sample(150.05, -19.95, 7) == Approx(3.0));
  CHECK(std::isnan(kh.sample(149.0, -19.95, 0)));
  const auto kv = GriddedField::read(file, "", "ocean_vertical_tracer_diffusivity");
  CHECK(kv.nz() == 3);
  // scale_factor 0.001 (CF-1.13 §8.1); first time record only; 20 m lies halfway from 2 to 4.
  CHECK(kv.sample(150.1, -20.0, 20.0) == Approx(0.003));
  CHECK(kv.sample(150.1, -20.0, 500.0) == Approx(0.004));  // clamped at the last level
}

TEST_CASE("gridded field: sea floor is the deepest wet level of the velocity") {
  ScratchDir dir;
  const std::string file = ncgen(dir, "k", regular_cdl(with_diffusivity()));
  const auto floor = GriddedField::sea_floor(file, "u");
  CHECK(floor.sample(150.1, -20.0, 0) == Approx(30.0));
  CHECK(floor.sample(150.2, -19.9, 0) == Approx(0.0));  // only the surface level is wet
  CHECK(std::isnan(floor.sample(150.0, -20.0, 0)));  // a land node exactly: no wet neighbour carries weight
  CHECK(std::isnan(GriddedField::sea_floor(file, "u").sample(151.0, -20.0, 0)));
}

TEST_CASE("gridded field: errors name file, variable and what was expected") {
  ScratchDir dir;
  const std::string good = ncgen(dir, "k", regular_cdl(with_diffusivity()));
  CHECK_THROWS_WITH(GriddedField::read(good, "", "no_such_standard_name"),
                    Contains("k.nc") && Contains("no_such_standard_name"));
  CHECK_THROWS_WITH(GriddedField::read(good, "kz", "ocean_vertical_tracer_diffusivity"),
                    Contains("no variable 'kz'"));
  const std::string bad = ncgen(dir, "bad", regular_cdl(with_diffusivity("cm2 s-1")));
  CHECK_THROWS_WITH(GriddedField::read(bad, "", "ocean_tracer_xy_laplacian_diffusivity"),
                    Contains("bad.nc: kh") && Contains("m2 s-1") && Contains("cm2 s-1"));
  CHECK_THROWS_AS(GriddedField::read(dir / "missing.nc", "kh", "x"), InputError);
}
