// CurrentField on files written by ncgen (NetCDF reference tools): decoding
// (CF-1.13 §8.1 packing, §2.5.1 missing data), regular grids in every
// orientation, depth, time interpolation, multi-file sets and streaming.
// Expected values are derived from the formulas written into the files [D]:
// bilinear interpolation reproduces fields linear in lon and lat exactly.
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <thread>

#include "cullcast/base/error.hpp"
#include "cullcast/currents/current_field.hpp"
#include "currents_test_util.hpp"

using namespace cullcast;
using namespace cullcast::currents;
using namespace cullcast::currents::testing;

namespace {
// Float storage of velocities: about 1e-7 relative; tolerance in m/s.
constexpr double kTol_m_s = 2e-6;

double lin_u(double t, double, double lat, double lon) { return 0.01 * (lon - 150.0) + 0.02 * (lat + 20.0) + 0.001 * t; }
double lin_v(double t, double, double lat, double lon) { return -0.03 * (lon - 150.0) + 0.01 * (lat + 20.0) - 0.002 * t; }

void check_linear(CurrentField& f, double lon_shift = 0.0) {
  f.prepare(0.0 * 3600 + f.time_begin_s(), f.time_begin_s() + 3 * 3600.0);
  for (double lon : {150.05, 150.123, 150.5, 150.77, 150.999}) {
    for (double lat : {-20.4, -20.31, -20.0, -19.83}) {
      for (double h : {0.0, 0.25, 1.5, 3.0}) {
        const FlowSample s = f.sample(f.time_begin_s() + h * 3600.0, lon + lon_shift, lat, 0.0);
        INFO("lon " << lon << " lat " << lat << " hour " << h);
        REQUIRE(s.status == SampleStatus::water);
        CHECK(s.u_m_s == Approx(lin_u(h, 0, lat, lon)).margin(kTol_m_s));
        CHECK(s.v_m_s == Approx(lin_v(h, 0, lat, lon)).margin(kTol_m_s));
      }
    }
  }
}

RegularSpec linear_spec(std::vector<double> lon, std::vector<double> lat) {
  RegularSpec s;
  s.lon = std::move(lon);
  s.lat = std::move(lat);
  s.time = {0, 1, 2, 3, 4};
  s.u = lin_u;
  s.v = lin_v;
  return s;
}

// Day `k` (hourly frames from hour 24 k) of a non-linear field, for the
// streaming tests.
RegularSpec wavy_day(int k) {
  RegularSpec s = linear_spec({150, 150.2, 150.4, 150.6, 150.8, 151}, {-20.5, -20.25, -20, -19.75, -19.5});
  s.u = [](double t, double, double lat, double lon) { return 0.3 * std::sin(0.7 * t + 9 * lon) * std::cos(5 * lat); };
  s.v = [](double t, double, double lat, double lon) { return 0.2 * std::cos(0.3 * t - 7 * lat + lon); };
  s.time.clear();
  for (int h = 0; h < 24; ++h) s.time.push_back(k * 24 + h);
  return s;
}
}  // namespace

TEST_CASE("bilinear exactness on regular grids: non-uniform, descending, 0..360", "[currents][grid]") {
  ScratchDir dir;
  SECTION("non-uniform ascending") {
    auto f = CurrentField::open_files({ncgen(dir, "a", regular_cdl(linear_spec({150.0, 150.1, 150.35, 150.4, 150.9, 151.0},
                                                                              {-20.5, -20.3, -20.25, -19.8})))});
    CHECK(f.grid().kind == GridKind::regular);
    check_linear(f);
    // -180..180 positions on the same grid given as 0..360 or shifted by 360.
    check_linear(f, 360.0);
    check_linear(f, -360.0);
  }
  SECTION("descending latitude and longitude") {
    auto f = CurrentField::open_files({ncgen(dir, "b", regular_cdl(linear_spec({151.0, 150.6, 150.2, 150.0},
                                                                              {-19.8, -20.1, -20.2, -20.5})))});
    check_linear(f);
  }
  SECTION("grid in 0..360 across the 180 meridian, positions in -180..180") {
    RegularSpec s;
    s.lon = {178.0, 179.0, 180.0, 181.0, 182.5};
    s.lat = {-20.5, -19.5};
    s.time = {0, 1};
    s.u = [](double, double, double, double lon) { return 0.1 * (lon - 178.0); };
    auto f = CurrentField::open_files({ncgen(dir, "c", regular_cdl(s))});
    f.prepare(f.time_begin_s(), f.time_begin_s());
    // -179.5 is 180.5 in 0..360.
    CHECK(f.sample(f.time_begin_s(), -179.5, -20.0, 0).u_m_s == Approx(0.25).margin(kTol_m_s));
    CHECK(f.sample(f.time_begin_s(), 179.5, -20.0, 0).u_m_s == Approx(0.15).margin(kTol_m_s));
    CHECK(f.status(-177.0, -20.0) == SampleStatus::outside);
    CHECK(f.status(-177.6, -20.0) == SampleStatus::water);
  }
  SECTION("grid in -180..180 written across the antimeridian, positions in 0..360") {
    RegularSpec s;
    s.lon = {178.0, 179.0, -180.0, -179.0};
    s.lat = {-20.5, -19.5};
    s.time = {0, 1};
    s.u = [](double, double, double, double lon) { return lon < 0 ? 0.1 * (lon + 360.0 - 178.0) : 0.1 * (lon - 178.0); };
    auto f = CurrentField::open_files({ncgen(dir, "d", regular_cdl(s))});
    f.prepare(f.time_begin_s(), f.time_begin_s());
    CHECK(f.sample(f.time_begin_s(), 180.5, -20.0, 0).u_m_s == Approx(0.25).margin(kTol_m_s));
    CHECK(f.sample(f.time_begin_s(), -179.5, -20.0, 0).u_m_s == Approx(0.25).margin(kTol_m_s));
  }
}

TEST_CASE("depth levels: trilinear, positive up or down, clamped", "[currents][grid]") {
  ScratchDir dir;
  for (const std::string positive : {"down", "up"}) {
    RegularSpec s;
    s.lon = {150.0, 150.5};
    s.lat = {-20.5, -20.0};
    s.time = {0, 1};
    const double sign = positive == "down" ? 1.0 : -1.0;
    s.depth = positive == "down" ? std::vector<double>{0, 10, 50} : std::vector<double>{-50, -10, 0};
    s.depth_positive = positive;
    s.u = [sign](double, double z, double, double) { return 0.5 - 0.01 * (sign * z); };
    auto f = CurrentField::open_files({ncgen(dir, "z" + positive, regular_cdl(s))});
    INFO("positive " << positive);
    REQUIRE(f.grid().depths_m == std::vector<double>{0, 10, 50});
    f.prepare(f.time_begin_s(), f.time_end_s());
    const double t = f.time_begin_s();
    CHECK(f.sample(t, 150.2, -20.2, 0).u_m_s == Approx(0.5).margin(kTol_m_s));
    CHECK(f.sample(t, 150.2, -20.2, 5).u_m_s == Approx(0.45).margin(kTol_m_s));
    CHECK(f.sample(t, 150.2, -20.2, 30).u_m_s == Approx(0.2).margin(kTol_m_s));
    CHECK(f.sample(t, 150.2, -20.2, 80).u_m_s == Approx(0.0).margin(kTol_m_s));   // clamped to 50 m
    CHECK(f.sample(t, 150.2, -20.2, -3).u_m_s == Approx(0.5).margin(kTol_m_s));  // above the top level
  }
}

TEST_CASE("limit_depth: the surface levels down to the deepest reach, same samples, smaller frames", "[currents][grid]") {
  // Five levels listed from the surface down, and from the bottom up
  // (positive up: the kept levels are the last of the file's range). Land
  // only at 20 m and deeper: the kept mask must be the upper levels' one.
  ScratchDir dir;
  for (const std::string positive : {"down", "up"}) {
    INFO("positive " << positive);
    RegularSpec s;
    s.lon = {150.0, 150.25, 150.5, 150.75};
    s.lat = {-20.5, -20.25, -20.0};
    s.time = {0, 1, 2};
    const double sign = positive == "down" ? 1.0 : -1.0;
    s.depth = positive == "down" ? std::vector<double>{0, 5, 10, 20, 50} : std::vector<double>{-50, -20, -10, -5, 0};
    s.depth_positive = positive;
    s.u = [sign](double t, double z, double, double lo) {
      const double d = sign * z;
      return 0.3 + 0.01 * d - 0.0002 * d * d + 0.2 * (lo - 150.0) + 0.05 * t;
    };
    s.v = [sign](double t, double z, double la, double) { return -0.1 + 0.004 * sign * z + 0.3 * (la + 20.5) - 0.02 * t; };
    s.land = [sign](double z, double, double lo) { return sign * z >= 20 && lo > 150.6; };
    const std::string file = ncgen(dir, "limit" + positive, regular_cdl(s));
    auto full = CurrentField::open_files({file});
    auto upper = CurrentField::open_files({file});
    REQUIRE(full.limit_depth(std::numeric_limits<double>::infinity()) == 5);
    REQUIRE(full.limit_depth(100.0) == 5);  // no level that deep: all of them
    upper.prepare(upper.time_begin_s(), upper.time_end_s());  // frames read before the limit are dropped
    REQUIRE(upper.limit_depth(7.0) == 3);                     // 0, 5 and 10 m: 10 m brackets 7 m
    CHECK(upper.grid().nz == 3);
    CHECK(upper.grid().depths_m == std::vector<double>{0, 5, 10});
    const double t0 = full.time_begin_s(), t1 = full.time_end_s();
    full.prepare(t0, t1);
    upper.prepare(t0, t1);
    CHECK(upper.frame_bytes() * 5 == full.frame_bytes() * 3);
    std::size_t compared = 0;
    for (double t = t0; t <= t1; t += (t1 - t0) / 4)
      for (double z : {0.0, 2.5, 5.0, 7.0, 10.0})
        for (double lon = 150.0; lon <= 150.75; lon += 0.0625)
          for (double lat = -20.5; lat <= -20.0; lat += 0.0625) {
            const FlowSample a = full.sample(t, lon, lat, z), b = upper.sample(t, lon, lat, z);
            CHECK(a.u_m_s == b.u_m_s);
            CHECK(a.v_m_s == b.v_m_s);
            ++compared;
          }
    CHECK(compared == 5 * 5 * 13 * 9);
    CHECK(upper.status(150.7, -20.2) == full.status(150.7, -20.2));
    auto surface = CurrentField::open_files({file});
    CHECK(surface.limit_depth(0.0) == 1);
    surface.prepare(t0, t1);
    CHECK(surface.sample(t0, 150.3, -20.3, 0.0).u_m_s == full.sample(t0, 150.3, -20.3, 0.0).u_m_s);
  }
}

TEST_CASE("decoding: packing, fill, missing_value, valid_range, cm/s (CF-1.13 §8.1, §2.5.1)", "[currents][decode]") {
  ScratchDir dir;
  // 2 x 3 nodes, one frame twice (steady). u packed as short: u = p*0.001 + 0.5
  // (CF-1.13 §8.1); p = -32767 is _FillValue, p = 999 is missing_value, p = 30000
  // lies outside valid_range [-20000, 20000] which is compared in packed units
  // (CF-1.13 §2.5.1). v in cm/s as float with NaN.
  const std::string cdl = R"(netcdf packed {
dimensions: time = 2 ; lat = 2 ; lon = 3 ;
variables:
  double time(time) ; time:units = "days since 2026-12-01" ; time:calendar = "gregorian" ;
  float lon(lon) ; lon:units = "degrees_east" ;
  float lat(lat) ; lat:units = "degrees_north" ;
  short east(time, lat, lon) ; east:standard_name = "eastward_sea_water_velocity" ; east:units = "m s-1" ;
    east:scale_factor = 0.001 ; east:add_offset = 0.5 ; east:_FillValue = -32767s ; east:missing_value = 999s ;
    east:valid_range = -20000s, 20000s ;
  float north(time, lat, lon) ; north:standard_name = "northward_sea_water_velocity" ; north:units = "cm/s" ;
data:
  time = 0, 1 ;
  lon = 150, 150.5, 151 ;
  lat = -20, -19 ;
  east = 100, -32767, 999, 30000, -200, 0,   100, -32767, 999, 30000, -200, 0 ;
  north = 10, 20, 30, NaN, -50, 5,   10, 20, 30, NaN, -50, 5 ;
}
)";
  auto f = CurrentField::open_files({ncgen(dir, "packed", cdl)});
  f.prepare(f.time_begin_s(), f.time_end_s());
  const double t = f.time_begin_s() + 3600;
  // Node (row 0, col 0): u = 100*0.001 + 0.5 = 0.6, v = 10 cm/s = 0.1 m/s.
  FlowSample s = f.sample(t, 150.0, -20.0, 0);
  CHECK(s.status == SampleStatus::water);
  CHECK(s.u_m_s == Approx(0.6).margin(kTol_m_s));
  CHECK(s.v_m_s == Approx(0.1).margin(kTol_m_s));
  // Node (0,1) _FillValue, (0,2) missing_value, (1,0) outside valid_range and NaN: land.
  CHECK(f.status(150.5, -20.0) == SampleStatus::land);
  CHECK(f.status(151.0, -20.0) == SampleStatus::land);
  CHECK(f.status(150.0, -19.0) == SampleStatus::land);
  // Node (1,1): u = -200*0.001+0.5 = 0.3, v = -0.5; node (1,2): u = 0.5, v = 0.05.
  s = f.sample(t, 150.5, -19.0, 0);
  CHECK(s.status == SampleStatus::water);
  CHECK(s.u_m_s == Approx(0.3).margin(kTol_m_s));
  CHECK(s.v_m_s == Approx(-0.5).margin(kTol_m_s));
  // Between (1,1) and (1,2): masked nodes count as 0, wet ones interpolate.
  s = f.sample(t, 150.75, -19.0, 0);
  CHECK(s.u_m_s == Approx(0.4).margin(kTol_m_s));
  CHECK(s.v_m_s == Approx(-0.225).margin(kTol_m_s));
  // Halfway between (0,0) wet and (0,1) masked: 0.5*0.6 + 0.5*0 (land by nearest node rule at 0.49).
  s = f.sample(t, 150.25, -20.0, 0);
  CHECK(s.u_m_s == Approx(0.3).margin(kTol_m_s));
  CHECK(f.status(150.24, -20.0) == SampleStatus::water);
  CHECK(f.status(150.26, -20.0) == SampleStatus::land);
  CHECK(f.grid().land_fraction == Approx(3.0 / 6.0));
  CHECK(f.calendar().kind() == CalendarKind::standard);
}

TEST_CASE("time: linear between frames, outside beyond the span, calendars", "[currents][time]") {
  ScratchDir dir;
  RegularSpec s = linear_spec({150, 150.5, 151}, {-20.5, -20, -19.5});
  s.calendar = "360_day";
  s.time_units = "days since 2026-02-29";
  s.time = {0, 0.5, 1.0};
  auto f = CurrentField::open_files({ncgen(dir, "t360", regular_cdl(s))});
  CHECK(f.calendar().kind() == CalendarKind::day360);
  CHECK(f.format_time(f.time_begin_s()) == "2026-02-29T00:00:00Z");
  CHECK(f.format_time(f.time_end_s()) == "2026-02-30T00:00:00Z");
  CHECK(f.frame_step_s() == 43200.0);
  f.prepare(f.time_begin_s(), f.time_end_s());
  // u depends on the file's time value t (days here): 0.001 * t.
  const double t = f.time_begin_s() + 0.75 * 86400.0;
  CHECK(f.sample(t, 150.2, -20.2, 0).u_m_s == Approx(lin_u(0.75, 0, -20.2, 150.2)).margin(kTol_m_s));
  CHECK(f.sample(f.time_end_s() + 1, 150.2, -20.2, 0).status == SampleStatus::outside);
  CHECK(f.sample(f.time_begin_s() - 1, 150.2, -20.2, 0).status == SampleStatus::outside);
  CHECK_THROWS_AS(f.prepare(f.time_end_s(), f.time_end_s() + 86400.0), InputError);

  // The scenario's calendar overrides the file's (CF says the file should have one).
  study::CurrentsSettings settings;
  s.calendar = "";
  s.time_units = "days since 2020-02-28 23:10";
  s.time = {0, 1};
  settings.files = {ncgen(dir, "nocal", regular_cdl(s))};
  CHECK(CurrentField::open(settings).format_time(CurrentField::open(settings).time_end_s()) == "2020-02-29T23:10:00Z");
  settings.calendar = "noleap";
  auto g = CurrentField::open(settings);
  CHECK(g.calendar().kind() == CalendarKind::noleap);
  CHECK(g.format_time(g.time_end_s()) == "2020-03-01T23:10:00Z");  // CF-1.13 §4.4.1 example
}

TEST_CASE("multi-file sets: concatenation, identical duplicates, conflicts, gaps", "[currents][files]") {
  ScratchDir dir;
  RegularSpec s = linear_spec({150, 150.5, 151}, {-20.5, -20, -19.5});
  s.time = {6, 7, 8, 9};
  const std::string late = ncgen(dir, "late", regular_cdl(s));
  s.time = {0, 1, 2, 3};
  const std::string early = ncgen(dir, "early", regular_cdl(s));
  s.time = {3, 4};
  const std::string overlap = ncgen(dir, "overlap", regular_cdl(s));
  auto f = CurrentField::open_files({late, early, overlap});  // any order
  CHECK(f.frame_count() == 9);  // 0..4, 6..9 with 3 de-duplicated
  CHECK(f.frame_step_s() == 3600.0);
  REQUIRE(f.gaps().size() == 1);
  CHECK(f.format_time(f.gaps()[0].from_s) == "2026-12-01T04:00:00Z");
  CHECK(f.format_time(f.gaps()[0].to_s) == "2026-12-01T06:00:00Z");
  // Spans that touch a gap only at its end frames do not cross it.
  const double h0 = f.time_begin_s();
  CHECK(f.gap_within(h0, h0 + 4 * 3600.0) == nullptr);
  CHECK(f.gap_within(h0 + 6 * 3600.0, h0 + 9 * 3600.0) == nullptr);
  CHECK(f.gap_within(h0 + 3 * 3600.0, h0 + 4.5 * 3600.0) == &f.gaps()[0]);
  CHECK(f.gap_within(h0 + 7 * 3600.0, h0 + 2 * 3600.0) == &f.gaps()[0]);  // either order
  CHECK(f.stretch_end_s(h0 + 1 * 3600.0) == h0 + 4 * 3600.0);
  CHECK(f.stretch_end_s(h0 + 4 * 3600.0) == h0 + 4 * 3600.0);
  CHECK(f.stretch_end_s(h0 + 5 * 3600.0) == h0 + 5 * 3600.0);  // inside the gap: no room
  CHECK(f.stretch_end_s(h0 + 6 * 3600.0) == f.time_end_s());
  REQUIRE(f.files().size() == 3);
  CHECK(f.files()[0] == early);
  // Across the file boundary and the gap, linear in time.
  f.prepare(f.time_begin_s() + 3.5 * 3600, f.time_begin_s() + 6.5 * 3600);
  for (double h : {3.5, 4.0, 5.0, 6.5}) {
    CHECK(f.sample(f.time_begin_s() + h * 3600, 150.3, -20.1, 0).u_m_s ==
          Approx(lin_u(h, 0, -20.1, 150.3)).margin(kTol_m_s));
  }
  // A file holding time 3 with different data is refused.
  s.u = [](double t, double z, double la, double lo) { return lin_u(t, z, la, lo) + 0.01; };
  const std::string conflicting = ncgen(dir, "conflict", regular_cdl(s));
  try {
    CurrentField::open_files({early, conflicting});
    FAIL("conflicting overlap accepted");
  } catch (const InputError& e) {
    const std::string m = e.what();
    CHECK_THAT(m, Catch::Contains("early.nc") && Catch::Contains("conflict.nc") && Catch::Contains("different velocities"));
  }
}

TEST_CASE("streaming: frame memory stays bounded over a long multi-file set", "[currents][stream]") {
  ScratchDir dir;
  std::vector<std::string> files;
  for (int k = 0; k < 6; ++k) {
    RegularSpec s = linear_spec({150, 150.2, 150.4, 150.6, 150.8, 151}, {-20.5, -20.25, -20, -19.75, -19.5});
    s.time.clear();
    for (int h = 0; h < 24; ++h) s.time.push_back(k * 24 + h);
    files.push_back(ncgen(dir, "day" + std::to_string(k), regular_cdl(s)));
  }
  study::CurrentsSettings settings;
  for (const auto& p : files) settings.files.emplace_back(p);
  settings.frames_ahead = 2;
  for (const bool background : {false, true}) {
    INFO("background decoder " << (background ? "on" : "off"));
    auto f = CurrentField::open(settings);
    f.set_background_reads(background);
    REQUIRE(f.frame_count() == 144);
    CHECK(f.frame_bytes() == 0);  // nothing loaded before prepare()
    const size_t nodes = 30;
    size_t peak = 0;
    const double t0 = f.time_begin_s();
    for (double t = t0; t + 600 <= f.time_end_s(); t += 600) {  // 10-minute steps
      f.prepare(t, t + 600);
      peak = std::max(peak, f.frame_bytes());
      const double h = (t + 300 - t0) / 3600.0;
      REQUIRE(f.sample(t + 300, 150.5, -20.1, 0).u_m_s ==
              Approx(lin_u(h, 0, -20.1, 150.5)).margin(kTol_m_s));
    }
    // Going back in time reloads the earlier frames.
    for (double h : {100.5, 20.25, 21.0, 20.5, 3.75, 140.0}) {
      const double t = t0 + h * 3600.0;
      f.prepare(t, t + 600);
      REQUIRE(f.sample(t + 60, 150.5, -20.1, 0).u_m_s ==
              Approx(lin_u(h + 1.0 / 60, 0, -20.1, 150.5)).margin(kTol_m_s));
    }
    // 1 + frames_ahead intervals of 4 floats per node, plus the last
    // interval's two frames (2 floats and a mask byte per node), decoded in
    // the background or pending (read_pending()).
    const size_t frames = 2;
    CHECK(peak <= (3 * 4 + 2 * frames) * sizeof(float) * nodes + frames * nodes);
    CHECK(peak > 0);
  }
}

TEST_CASE("streaming: the background decoder gives the same data and reports errors when frames are needed",
          "[currents][stream]") {
  // Frames of a non-linear field over four files; the last file's frames
  // from hour 80 on carry a 40 m/s current (a units error the decoder must
  // report, naming the file).
  ScratchDir dir;
  std::vector<std::string> files;
  for (int k = 0; k < 4; ++k) {
    RegularSpec s = wavy_day(k);
    if (k == 3) s.u = [](double t, double, double, double) { return t >= 80 ? 40.0 : 0.1; };
    files.push_back(ncgen(dir, "part" + std::to_string(k), regular_cdl(s)));
  }
  auto foreground = CurrentField::open_files(files), background = CurrentField::open_files(files);
  foreground.set_background_reads(false);
  background.set_background_reads(true);
  const double t0 = foreground.time_begin_s();
  auto same_samples = [&](double t) {
    for (double lon : {150.03, 150.41, 150.97}) {
      for (double lat : {-20.44, -20.02, -19.61}) {
        const FlowSample a = foreground.sample(t, lon, lat, 0), b = background.sample(t, lon, lat, 0);
        REQUIRE(a.u_m_s == b.u_m_s);  // the same bits: only the thread that decodes differs
        REQUIRE(a.v_m_s == b.v_m_s);
      }
    }
  };
  // Forward in 20-minute steps, then a jump ahead (a later spawning night),
  // then back in time (backward drift): both fields agree everywhere.
  for (double t = t0; t + 1200 <= t0 + 60 * 3600.0; t += 1200) {
    foreground.prepare(t, t + 1200);
    background.prepare(t, t + 1200);
    same_samples(t + 500);
  }
  for (double h : {70.0, 70.33, 20.0, 19.67, 5.5}) {
    const double t = t0 + h * 3600.0;
    foreground.prepare(t, t + 1200);
    background.prepare(t, t + 1200);
    same_samples(t + 600);
  }
  // The bad frames: an error, naming the file and the speed, from both; the
  // background decoder's surfaces once its interval is needed, not later.
  auto first_failure = [&](CurrentField& f, std::string& message) {  // the step whose prepare() throws
    for (double t = t0 + 60 * 3600.0; t + 1200 <= t0 + 95 * 3600.0; t += 1200) {
      try {
        f.prepare(t, t + 1200);
      } catch (const InputError& e) {
        message = e.what();
        return t;
      }
    }
    return 0.0;
  };
  std::string message_fg, message_bg;
  const double failed_fg = first_failure(foreground, message_fg);
  const double failed_bg = first_failure(background, message_bg);
  CHECK(message_bg == message_fg);
  // Asked again, the field reads the bad interval itself: the same error, not a stale state.
  CHECK_THROWS_WITH(background.prepare(failed_bg, failed_bg + 1200), message_fg);
  CHECK_THAT(message_bg, Catch::Contains("part3") && Catch::Contains("exceeds"));
  // The frame at hour 80 is needed from the step starting at 79 h; the
  // foreground reads one interval ahead, so it fails an hour earlier.
  CHECK(failed_fg >= t0 + 78 * 3600.0 - 1);
  CHECK(failed_bg <= t0 + 79 * 3600.0 + 1);
  CHECK(failed_bg >= failed_fg);
}

TEST_CASE("streaming: read-ahead left pending is decoded by read_pending() on another thread, or by the prepare() "
          "that needs it, with the background decoder's bits",
          "[currents][stream]") {
  ScratchDir dir;
  std::vector<std::string> files;
  for (int k = 0; k < 3; ++k) files.push_back(ncgen(dir, "part" + std::to_string(k), regular_cdl(wavy_day(k))));
  auto reference = CurrentField::open_files(files), helped = CurrentField::open_files(files),
       unhelped = CurrentField::open_files(files);
  reference.set_background_reads(true);
  helped.set_background_reads(false);  // read-ahead pending: read_pending() on a second thread
  unhelped.set_background_reads(false);  // pending, never helped: each prepare() decodes what it needs
  const double t0 = reference.time_begin_s();
  auto same = [&](const CurrentField& f, double t) {
    for (double lon : {150.03, 150.41, 150.97}) {
      for (double lat : {-20.44, -20.02, -19.61}) {
        const FlowSample a = reference.sample(t, lon, lat, 0), b = f.sample(t, lon, lat, 0);
        REQUIRE(a.u_m_s == b.u_m_s);
        REQUIRE(a.v_m_s == b.v_m_s);
      }
    }
  };
  int decoded_aside = 0;
  for (double t = t0; t + 1200 <= t0 + 66 * 3600.0; t += 1200) {
    for (CurrentField* f : {&reference, &helped, &unhelped}) f->prepare(t, t + 1200);
    bool decoded = false;
    std::thread side([&] { decoded = helped.read_pending(); });
    same(helped, t + 500);  // sampled while the other thread decodes the next interval
    side.join();
    decoded_aside += decoded;
    same(helped, t + 700);
    same(unhelped, t + 500);
  }
  // Hourly frames, 20-minute steps: a new interval to read ahead every third step.
  CHECK(decoded_aside >= 60);
  CHECK_FALSE(reference.read_pending());  // the background decoder leaves nothing pending
  // Jumping back in time drops a pending interval undecoded; the data stay right.
  for (double h : {30.0, 5.5, 40.33}) {
    const double t = t0 + h * 3600.0;
    for (CurrentField* f : {&reference, &helped, &unhelped}) f->prepare(t, t + 1200);
    same(helped, t + 600);
    same(unhelped, t + 600);
  }
}

TEST_CASE("upward velocity is discovered and interpolated like u and v", "[currents][grid]") {
  ScratchDir dir;
  RegularSpec s;
  s.lon = {150.0, 150.5, 151.0};
  s.lat = {-20.5, -20.0};
  s.depth = {0, 20};
  s.time = {0, 1};
  s.u = [](double, double, double, double) { return 0.1; };
  // w(t, z, lat, lon) = 1e-3 * (lon - 150) + 1e-4 * z + 1e-3 * t, written as extra CDL.
  s.extra_variables =
      "  float w(time, depth, lat, lon) ;\n    w:standard_name = \"upward_sea_water_velocity\" ;\n    w:units = \"cm s-1\" ;\n";
  std::string data = "  w = ";
  bool first = true;
  for (double t : s.time)
    for (double z : s.depth)
      for (size_t j = 0; j < s.lat.size(); ++j)
        for (double lon : s.lon) {
          data += (first ? "" : ", ") + num(100.0 * (1e-3 * (lon - 150.0) + 1e-4 * z + 1e-3 * t));  // cm/s
          first = false;
        }
  s.extra_data = data + " ;\n";
  auto f = CurrentField::open_files({ncgen(dir, "w", regular_cdl(s))});
  CHECK(f.variables().w == "w");
  f.prepare(f.time_begin_s(), f.time_end_s());
  const FlowSample smp = f.sample(f.time_begin_s() + 1800.0, 150.25, -20.3, 5.0);
  CHECK(smp.w_m_s == Approx(1e-3 * 0.25 + 1e-4 * 5.0 + 1e-3 * 0.5).margin(1e-8));
  CHECK(smp.u_m_s == Approx(0.1).margin(kTol_m_s));
}
