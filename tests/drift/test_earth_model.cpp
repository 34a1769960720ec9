#include <catch2/catch.hpp>

#include <GeographicLib/Geodesic.hpp>

#include "cullcast/drift/earth_model.hpp"

using cullcast::drift::EarthModel;

TEST_CASE("sphere: one degree is R·π/180 metres") {
  const auto e = EarthModel::sphere(6371000.0);
  CHECK(e.metres_per_degree_lat(-20) == Approx(6371000.0 * 3.14159265358979323846 / 180));
  CHECK(e.metres_per_degree_lon(60) == Approx(0.5 * 6371000.0 * 3.14159265358979323846 / 180));
}

TEST_CASE("WGS84 radii of curvature match GeographicLib geodesics") {
  // Independent reference: GeographicLib (Karney 2013, J. Geodesy 87:43–55),
  // Geodesic::WGS84(). A 0.001° step is short enough that the geodesic length
  // equals radius × angle to better than 1e-6 relative.
  const auto& g = GeographicLib::Geodesic::WGS84();
  const auto e = EarthModel::wgs84();
  for (double lat : {0.0, -20.0, 45.0, -67.5}) {
    double north = 0, east = 0;
    g.Inverse(lat - 0.0005, 150.0, lat + 0.0005, 150.0, north);
    g.Inverse(lat, 150.0, lat, 150.001, east);
    CHECK(e.metres_per_degree_lat(lat) * 0.001 == Approx(north).epsilon(1e-6));
    CHECK(e.metres_per_degree_lon(lat) * 0.001 == Approx(east).epsilon(1e-6));
  }
}
