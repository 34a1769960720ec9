// Aggregations: reading detections, single-linkage clustering, attachment to reefs.
#include <catch2/catch.hpp>

#include <GeographicLib/Geodesic.hpp>

#include "cullcast/base/error.hpp"
#include "cullcast/reefs/aggregations.hpp"
#include "cullcast/reefs/reef_geometry.hpp"
#include "reef_test_support.hpp"

using namespace cullcast;
using namespace cullcast::reefs;
using namespace reef_test;
using Catch::Matchers::Contains;

namespace {
// A point at a geodesic distance (m) and azimuth (degrees) from another (GeographicLib Direct).
LonLat from(LonLat p, double azimuth, double metres) {
  double lat = 0, lon = 0;
  GeographicLib::Geodesic::WGS84().Direct(p.lat, p.lon, azimuth, metres, lat, lon);
  return {lon, lat};
}
}  // namespace

TEST_CASE("hand-made detections cluster by single linkage and attach to reefs", "[reefs][aggregations]") {
  // Reef A: 0.01-degree square; reef B: a square 0.05 degrees east.
  const ReefSet reefs({make_reef("A", {Polygon{ring({{150.0, -20.01}, {150.01, -20.01}, {150.01, -20.0}, {150.0, -20.0}}), {}}}),
                       make_reef("B", {Polygon{ring({{150.05, -20.01}, {150.06, -20.01}, {150.06, -20.0}, {150.05, -20.0}}), {}}})});
  const LonLat a0{150.005, -20.005};  // middle of A
  std::vector<Detection> d(7);
  // Chain on A: 150 m steps eastward. Single linkage joins all three with a
  // 200 m threshold though the ends are 300 m apart.
  d[0].at = a0;
  d[1].at = from(a0, 90, 150);
  d[2].at = from(d[1].at, 90, 150);
  // Just off B's west edge by 400 m (the edge runs north-south at 150.05).
  d[3].at = from({150.05, -20.005}, 270, 400);
  // 1.2 km west of A's west edge: beyond the 1 km attach tolerance.
  d[4].at = from({150.0, -20.005}, 270, 1200);
  // 250 m from d[0]: a separate group under 200 m, but on reef A too.
  d[5].at = from(a0, 0, 250);
  // Second detection of the off-B group, 100 m further out.
  d[6].at = from(d[3].at, 270, 100);
  const double counts[] = {10, 20, 5, 7, 3, 4, 1};
  for (int i = 0; i < 7; ++i) d[static_cast<std::size_t>(i)].count = counts[i];

  const auto g = cluster_detections(d, reefs, 200.0, 1000.0);
  REQUIRE(g.size() == 4);
  CHECK(g[0].id == "AGG-1");
  CHECK(g[0].members == std::vector<std::size_t>{0, 1, 2});
  CHECK(g[0].adults == 35);
  CHECK(g[0].reef_index == 0);
  CHECK(g[0].distance_m == 0);
  CHECK(g[1].id == "AGG-2");
  CHECK(g[1].members == std::vector<std::size_t>{3, 6});
  CHECK(g[1].adults == 8);
  CHECK(g[1].reef_index == 1);
  CHECK(g[1].distance_m == Approx(400).margin(0.5));  // geodesic, GeographicLib Direct above
  CHECK(g[2].members == std::vector<std::size_t>{4});
  CHECK(g[2].reef_index == -1);
  CHECK(g[3].members == std::vector<std::size_t>{5});
  CHECK(g[3].reef_index == 0);
  // A larger threshold merges d[5] into the first group.
  const auto wide = cluster_detections(d, reefs, 260.0, 1000.0);
  CHECK(wide.size() == 3);
  CHECK(wide[0].members == std::vector<std::size_t>{0, 1, 2, 5});
}

TEST_CASE("detection CSV: optional columns and errors", "[reefs][aggregations][errors]") {
  const fs::path dir = scratch("detections");
  const auto ok = load_detections(write_file(dir / "ok.csv",
      "\xEF\xBB\xBFlon,lat,count,mean_diameter_cm,observed_at,notes\r\n150.1,-20.1,5,31.5,2025-12-10T21:00:00Z,\"a, b\"\r\n150.2,-20.2,3,,,\r\n"));
  REQUIRE(ok.size() == 2);
  CHECK(ok[0].mean_diameter_cm == 31.5);
  CHECK(ok[0].observed_at->hour == 21);
  CHECK_FALSE(ok[1].mean_diameter_cm.has_value());
  CHECK(ok[1].line == 3);
  const auto demo = load_detections(demo_dir() + "/aggregations.csv");
  CHECK(demo.size() == 10);

  auto error_of = [&](const std::string& name, const std::string& text) {
    try {
      load_detections(write_file(dir / name, text));
    } catch (const InputError& e) {
      return std::string(e.what());
    }
    return std::string("(no error)");
  };
  CHECK_THAT(error_of("lon.csv", "lon,lat,count\n190,-20,1\n"), Contains("lon.csv line 2, column \"lon\"") && Contains("190"));
  CHECK_THAT(error_of("cnt.csv", "lon,lat,count\n150,-20,-1\n"), Contains("cnt.csv line 2, column \"count\"") && Contains(">= 0"));
  CHECK_THAT(error_of("miss.csv", "lon,lat,cnt\n150,-20,1\n"), Contains("miss.csv line 1: missing column \"count\""));
  CHECK_THAT(error_of("time.csv", "lon,lat,count,observed_at\n150,-20,1,yesterday\n"),
             Contains("time.csv line 2, column \"observed_at\"") && Contains("ISO 8601"));
  CHECK_THAT(error_of("nan.csv", "lon,lat,count\n150,NaN,1\n"), Contains("nan.csv line 2, column \"lat\""));
}
