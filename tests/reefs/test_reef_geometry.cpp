// Geodesic areas, perimeters, centroids, distances and the outside-the-grid report.
#include <catch2/catch.hpp>

#include <GeographicLib/Geodesic.hpp>
#include <GeographicLib/GeodesicLine.hpp>
#include <GeographicLib/PolygonArea.hpp>

#include <algorithm>
#include <cmath>
#include <random>

#include "cullcast/reefs/reef_geometry.hpp"
#include "reef_test_support.hpp"

using namespace cullcast::reefs;
using namespace reef_test;

namespace {

// Area between the equator and latitude phi per radian of longitude on the
// WGS84 ellipsoid: a^2 q(phi) / 2 with
// q = (1 - e^2) [ sin phi / (1 - e^2 sin^2 phi) - 1/(2e) ln((1 - e sin phi)/(1 + e sin phi)) ]
// — Snyder (1987), "Map Projections — A Working Manual", USGS Professional
// Paper 1395, eq. (3-12) (from memory; it reproduces the sphere's
// R^2 (sin phi2 - sin phi1) when e -> 0, checked below).
double ellipsoid_band_area_per_radian(double lat_deg) {
  const double a = 6378137.0, f = 1 / 298.257223563;
  const double e2 = f * (2 - f), e = std::sqrt(e2);
  const double s = std::sin(lat_deg * M_PI / 180);
  const double q = (1 - e2) * (s / (1 - e2 * s * s) - 1 / (2 * e) * std::log((1 - e * s) / (1 + e * s)));
  return a * a * q / 2;
}

// Quadrangle with its parallels densified so geodesic edges follow them closely.
Ring quadrangle(double lon0, double lat0, double lon1, double lat1, int steps) {
  std::vector<LonLat> p;
  for (int i = 0; i <= steps; ++i) p.push_back({lon0 + (lon1 - lon0) * i / steps, lat0});
  for (int i = 0; i <= steps; ++i) p.push_back({lon1 - (lon1 - lon0) * i / steps, lat1});
  return ring(p);
}

}  // namespace

TEST_CASE("area of a lat/lon quadrangle matches the ellipsoidal closed form", "[reefs][area]") {
  // Closed form: Snyder (1987) eq. (3-12) above; GeographicLib's edges are
  // geodesics, so parallels are densified (200 steps): the bulge of each
  // 0.0001-degree geodesic chord is ~1e-9 m, far below the 1e-7 tolerance.
  for (double lat0 : {-20.3, -45.0, 10.0}) {
    const double lon0 = 150.0, dlon = 0.02, dlat = 0.015;
    Reef r = make_reef("Q", {Polygon{quadrangle(lon0, lat0, lon0 + dlon, lat0 + dlat, 200), {}}});
    compute_metrics(r);
    const double expected_m2 =
        (ellipsoid_band_area_per_radian(lat0 + dlat) - ellipsoid_band_area_per_radian(lat0)) * dlon * M_PI / 180;
    INFO("lat0 " << lat0);
    CHECK(r.area_ha * 1e4 == Approx(expected_m2).epsilon(1e-7));
    CHECK(r.lon_min == lon0);
    CHECK(r.lat_max == Approx(lat0 + dlat));
    // The centroid of a small quadrangle is its middle (to second order in its size).
    CHECK(r.centroid.lon == Approx(lon0 + dlon / 2).margin(1e-9));
    CHECK(r.centroid.lat == Approx(lat0 + dlat / 2).margin(2e-6));
  }
  // e -> 0 limit of the same formula is the sphere's band area R^2 dlon (sin phi2 - sin phi1)
  // (Snyder 1987, same chapter): with a = R the ratio to the ellipsoid is 1 - O(e^2).
  const double ratio = (ellipsoid_band_area_per_radian(10) - ellipsoid_band_area_per_radian(0)) /
                       (6378137.0 * 6378137.0 * std::sin(10 * M_PI / 180));
  CHECK(ratio == Approx(1).margin(0.01));
}

TEST_CASE("holes are subtracted and parts added, as GeographicLib computes them ring by ring", "[reefs][area]") {
  // Reference: GeographicLib PolygonArea on each ring separately (Karney 2013, J. Geodesy 87:43-55).
  auto ring_area = [](const Ring& r) {
    GeographicLib::PolygonArea poly(GeographicLib::Geodesic::WGS84());
    for (std::size_t i = 0; i + 1 < r.size(); ++i) poly.AddPoint(r[i].lat, r[i].lon);
    double perimeter = 0, area = 0;
    poly.Compute(false, true, perimeter, area);
    return std::pair{std::abs(area), perimeter};
  };
  const Ring outer = star(150.2, -20.2, 0.01, 40, 0.3, 3);
  const Ring hole = star(150.2, -20.2, 0.004, 17, 0.1, 2, true);
  const Ring second = star(150.25, -20.21, 0.005, 23, 0.4, 4);
  Reef r = make_reef("H", {Polygon{outer, {hole}}, Polygon{second, {}}});
  compute_metrics(r);
  const auto [ao, po] = ring_area(outer);
  const auto [ah, ph] = ring_area(hole);
  const auto [as, ps] = ring_area(second);
  CHECK(r.area_ha * 1e4 == Approx(ao - ah + as).epsilon(1e-12));
  CHECK(r.perimeter_km * 1e3 == Approx(po + ph + ps).epsilon(1e-12));
  // The same total from OGR's own (planar) area in a local equal-area sense is
  // close: a second, independent check of the hole subtraction (GDAL/GEOS).
  const auto g = to_ogr(r);
  const double deg_area = g->toMultiPolygon()->get_Area();  // square degrees
  const double m2_per_deg2 = 110700.0 * 110700.0 * std::cos(20.2 * M_PI / 180);  // near 20 S, approximate
  CHECK(r.area_ha * 1e4 == Approx(deg_area * m2_per_deg2).epsilon(0.01));
  // Area centroid vs GEOS Centroid (planar in degrees; differences ~1e-6 deg at this size).
  OGRPoint c;
  REQUIRE(g->Centroid(&c) == OGRERR_NONE);
  CHECK(r.centroid.lon == Approx(c.getX()).margin(2e-5));
  CHECK(r.centroid.lat == Approx(c.getY()).margin(2e-5));
}

TEST_CASE("distance to the edge agrees with a brute-force geodesic search", "[reefs][distance]") {
  // Reference: GeographicLib Inverse (Karney 2013) minimised along each edge by
  // golden-section search, independent of the local-metric projection used inside.
  const Reef r = [] {
    Reef x = make_reef("D", {Polygon{star(150.3, -20.1, 0.008, 15, 0.35, 3), {}}});
    compute_metrics(x);
    return x;
  }();
  const auto& geod = GeographicLib::Geodesic::WGS84();
  auto reference = [&](LonLat p) {
    double best = 1e30;
    const Ring& ring = r.parts[0].outer;
    for (std::size_t i = 0; i + 1 < ring.size(); ++i) {
      auto at = [&](double t) {
        double s = 0;
        geod.Inverse(p.lat, p.lon, ring[i].lat + t * (ring[i + 1].lat - ring[i].lat),
                     ring[i].lon + t * (ring[i + 1].lon - ring[i].lon), s);
        return s;
      };
      double lo = 0, hi = 1;
      for (int k = 0; k < 80; ++k) {
        const double m1 = lo + (hi - lo) * 0.381966, m2 = hi - (hi - lo) * 0.381966;
        (at(m1) < at(m2) ? hi : lo) = (at(m1) < at(m2) ? m2 : m1);
      }
      best = std::min({best, at(0), at(1), at((lo + hi) / 2)});
    }
    return best;
  };
  std::mt19937_64 gen(7);
  std::uniform_real_distribution<double> lon(150.28, 150.32), lat(-20.12, -20.08);
  double worst = 0;
  for (int i = 0; i < 300; ++i) {
    const LonLat p{lon(gen), lat(gen)};
    const double d = distance_to_edge_m(r, p), ref = reference(p);
    worst = std::max(worst, std::abs(d - ref));
  }
  // Documented accuracy: well under a metre within 10 km; here points are within ~3 km.
  CHECK(worst < 0.05);
}

TEST_CASE("reefs wholly outside a box are reported, touching ones are not", "[reefs]") {
  std::vector<Reef> reefs;
  reefs.push_back(make_reef("in", {Polygon{ring({{150.1, -20.1}, {150.2, -20.1}, {150.2, -20.0}}), {}}}));
  reefs.push_back(make_reef("out", {Polygon{ring({{151.1, -20.1}, {151.2, -20.1}, {151.2, -20.0}}), {}}}));
  reefs.push_back(make_reef("cross", {Polygon{ring({{150.45, -20.1}, {150.6, -20.1}, {150.6, -20.0}}), {}}}));
  // Bounding box overlaps the grid's corner, polygon does not (a triangle away from the corner).
  reefs.push_back(make_reef("corner", {Polygon{ring({{150.56, -20.56}, {150.46, -20.56}, {150.56, -20.46}}), {}}}));
  // The box lies entirely inside this reef: not outside.
  reefs.push_back(make_reef("around", {Polygon{ring({{149, -21}, {152, -21}, {152, -19}, {149, -19}}), {}}}));
  const ReefSet set(std::move(reefs));
  const auto outside = reefs_outside(set, 150.0, 150.5, -20.5, -20.0);
  CHECK(outside == std::vector<int>{1, 3});
}

TEST_CASE("ReefSet refuses duplicate ids built in code", "[reefs]") {
  std::vector<Reef> reefs{make_reef("a", {Polygon{star(150, -20, 0.01, 8, 0, 1), {}}}),
                          make_reef("a", {Polygon{star(150.1, -20, 0.01, 8, 0, 1), {}}})};
  CHECK_THROWS_WITH(ReefSet(std::move(reefs)), Catch::Contains("duplicate reef id \"a\""));
}
