// Every bad currents input must raise InputError naming the file and the
// variable or attribute at fault (project rule; CF-1.13 sections cited in the
// messages). Files are written by ncgen from CDL.
#include <catch2/catch.hpp>

#include <fstream>

#include "cullcast/base/error.hpp"
#include "cullcast/currents/current_field.hpp"
#include "currents_test_util.hpp"

using namespace cullcast;
using namespace cullcast::currents;
using namespace cullcast::currents::testing;

namespace {
RegularSpec base() {
  RegularSpec s;
  s.lon = {150, 150.5, 151};
  s.lat = {-20.5, -20, -19.5};
  s.time = {0, 1, 2};
  s.u = [](double, double, double, double) { return 0.2; };
  s.v = [](double, double, double, double) { return -0.1; };
  return s;
}

// Opens (and prepares) the files; returns the InputError message, or "" if none was thrown.
std::string error_of(const std::vector<std::string>& files, const std::string& calendar = "") {
  try {
    study::CurrentsSettings st;
    for (const auto& f : files) st.files.emplace_back(f);
    st.calendar = calendar;
    auto f = CurrentField::open(st);
    f.prepare(f.time_begin_s(), f.time_end_s());
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

std::string replace(std::string s, const std::string& from, const std::string& to) {
  const auto p = s.find(from);
  REQUIRE(p != std::string::npos);
  return s.replace(p, from.size(), to);
}
}  // namespace

TEST_CASE("bad inputs raise InputError naming file and variable", "[currents][bad]") {
  ScratchDir dir;
  const std::string good_cdl = regular_cdl(base());
  REQUIRE(error_of({ncgen(dir, "good", good_cdl)}).empty());

  SECTION("missing velocity variables") {
    const std::string m = error_of({ncgen(dir, "nou", replace(good_cdl, "eastward_sea_water_velocity", "something_else"))});
    CHECK_THAT(m, Catch::Contains("nou.nc") && Catch::Contains("eastward_sea_water_velocity") && Catch::Contains("u_variable"));
    study::CurrentsSettings st;
    st.files = {ncgen(dir, "named", good_cdl)};
    st.v_variable = "vvel";
    CHECK_THROWS_WITH(CurrentField::open(st), Catch::Contains("named.nc") && Catch::Contains("'vvel'"));
  }
  SECTION("no time axis") {
    const std::string cdl = R"(netcdf notime {
dimensions: lat = 2 ; lon = 2 ;
variables:
  double lon(lon) ; lon:units = "degrees_east" ; double lat(lat) ; lat:units = "degrees_north" ;
  float u(lat, lon) ; u:standard_name = "eastward_sea_water_velocity" ; u:units = "m s-1" ;
  float v(lat, lon) ; v:standard_name = "northward_sea_water_velocity" ; v:units = "m s-1" ;
data: lon = 1, 2 ; lat = 1, 2 ; u = 0, 0, 0, 0 ; v = 0, 0, 0, 0 ;
}
)";
    CHECK_THAT(error_of({ncgen(dir, "notime", cdl)}), Catch::Contains("notime.nc") && Catch::Contains("no time axis") && Catch::Contains("'u'"));
  }
  SECTION("non-monotonic or duplicated coordinates") {
    RegularSpec s = base();
    s.lon = {150, 150.7, 150.5};
    CHECK_THAT(error_of({ncgen(dir, "nonmono", regular_cdl(s))}), Catch::Contains("nonmono.nc") && Catch::Contains("'lon'") && Catch::Contains("monotonic"));
    s = base();
    s.lat = {-20.5, -20.5, -19.5};
    CHECK_THAT(error_of({ncgen(dir, "duplat", regular_cdl(s))}), Catch::Contains("duplat.nc") && Catch::Contains("'lat'") && Catch::Contains("index 1"));
    s = base();
    s.time = {0, 2, 1};
    CHECK_THAT(error_of({ncgen(dir, "nonmonotime", regular_cdl(s))}), Catch::Contains("nonmonotime.nc") && Catch::Contains("'time'") && Catch::Contains("strictly increasing"));
  }
  SECTION("grids that differ between files") {
    RegularSpec s = base();
    s.time = {3, 4};
    s.lon = {150, 150.5, 151.01};
    const std::string m = error_of({ncgen(dir, "g1", good_cdl), ncgen(dir, "g2", regular_cdl(s))});
    CHECK_THAT(m, Catch::Contains("g1.nc") && Catch::Contains("g2.nc") && Catch::Contains("different grids") && Catch::Contains("longitude 2"));
    s.lon = {150, 150.5, 151, 151.5};
    CHECK_THAT(error_of({ncgen(dir, "g1b", good_cdl), ncgen(dir, "g3", regular_cdl(s))}), Catch::Contains("sizes"));
  }
  SECTION("unknown calendar or time unit") {
    RegularSpec s = base();
    s.calendar = "martian";
    CHECK_THAT(error_of({ncgen(dir, "cal", regular_cdl(s))}), Catch::Contains("cal.nc") && Catch::Contains("'time'") && Catch::Contains("calendar") && Catch::Contains("martian"));
    s = base();
    s.time_units = "fortnights since 2026-12-01";
    CHECK_THAT(error_of({ncgen(dir, "unit", regular_cdl(s))}), Catch::Contains("unit.nc") && Catch::Contains("attribute units") && Catch::Contains("fortnights"));
    s.time_units = "months since 2026-12-01";
    CHECK_THAT(error_of({ncgen(dir, "months", regular_cdl(s))}), Catch::Contains("months.nc") && Catch::Contains("months"));
    CHECK_THAT(error_of({ncgen(dir, "calset", good_cdl)}, "lunar"), Catch::Contains("[currents] calendar") && Catch::Contains("lunar"));
  }
  SECTION("unknown velocity units, absurd speeds") {
    RegularSpec s = base();
    s.velocity_units = "knots";
    CHECK_THAT(error_of({ncgen(dir, "knots", regular_cdl(s))}), Catch::Contains("knots.nc") && Catch::Contains("'u'") && Catch::Contains("knots"));
    s = base();
    s.u = [](double, double, double, double) { return 25.0; };  // m/s: a unit or packing error
    CHECK_THAT(error_of({ncgen(dir, "fast", regular_cdl(s))}), Catch::Contains("fast.nc") && Catch::Contains("exceeds 10 m/s"));
  }
  SECTION("truncated file and a non-NetCDF file") {
    const std::string path = ncgen(dir, "whole", good_cdl);
    std::ifstream in(path, std::ios::binary);
    std::string bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    write_text(dir / "half.nc", bytes.substr(0, bytes.size() / 2));
    CHECK_THAT(error_of({(dir / "half.nc").string()}), Catch::Contains("half.nc") && Catch::Contains("truncated"));
    // The same with a NetCDF-4 (HDF5) file.
    const std::string path4 = ncgen(dir, "whole4", good_cdl, "nc4");
    std::ifstream in4(path4, std::ios::binary);
    std::string bytes4((std::istreambuf_iterator<char>(in4)), std::istreambuf_iterator<char>());
    write_text(dir / "half4.nc", bytes4.substr(0, bytes4.size() / 2));
    CHECK_THAT(error_of({(dir / "half4.nc").string()}), Catch::Contains("half4.nc"));
    write_text(dir / "notes.nc", "this is a text file, not NetCDF\n");
    CHECK_THAT(error_of({(dir / "notes.nc").string()}), Catch::Contains("notes.nc") && Catch::Contains("not a readable NetCDF file"));
    CHECK_THAT(error_of({(dir / "absent.nc").string()}), Catch::Contains("absent.nc"));
  }
  SECTION("velocity dimensions and depth attributes") {
    RegularSpec s = base();
    s.depth = {0, 10};
    s.depth_positive = "sideways";
    CHECK_THAT(error_of({ncgen(dir, "pos", regular_cdl(s))}), Catch::Contains("pos.nc") && Catch::Contains("'depth'") && Catch::Contains("positive"));
  }
}
