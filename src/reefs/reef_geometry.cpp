// Geodesic areas and perimeters: GeographicLib PolygonArea, after Karney
// (2013), "Algorithms for geodesics", J. Geodesy 87:43-55.
#include "cullcast/reefs/reef_geometry.hpp"

#include <GeographicLib/Geodesic.hpp>
#include <GeographicLib/PolygonArea.hpp>

#include <algorithm>
#include <cmath>
#include <limits>

namespace cullcast::reefs {
namespace {

constexpr double kPi = 3.14159265358979323846;
constexpr double kDeg = kPi / 180.0;
constexpr double kWgs84A = 6378137.0;               // semi-major axis, metres
constexpr double kWgs84F = 1.0 / 298.257223563;     // flattening
constexpr double kWgs84E2 = kWgs84F * (2 - kWgs84F);  // first eccentricity squared

// Geodesic area (m^2, absolute) and perimeter (m) of one closed ring.
void ring_area_perimeter(const Ring& ring, double& area_m2, double& perimeter_m) {
  GeographicLib::PolygonArea poly(GeographicLib::Geodesic::WGS84(), false);
  const std::size_t n = ring.size() >= 2 && ring.front().lon == ring.back().lon &&
                                ring.front().lat == ring.back().lat
                            ? ring.size() - 1
                            : ring.size();
  for (std::size_t i = 0; i < n; ++i) poly.AddPoint(ring[i].lat, ring[i].lon);
  double perimeter = 0, area = 0;
  poly.Compute(false, true, perimeter, area);
  area_m2 = std::abs(area);
  perimeter_m = perimeter;
}

// Signed planar area and centroid in a local equal-area frame.
struct RingMoments {
  double area = 0, cx = 0, cy = 0;  // signed area, first moments / area
};

RingMoments ring_moments(const Ring& ring, double lon0, double lat0) {
  const double c0 = std::cos(lat0 * kDeg), s0 = std::sin(lat0 * kDeg);
  auto x_of = [&](const LonLat& p) { return (p.lon - lon0) * kDeg * c0; };
  auto y_of = [&](const LonLat& p) { return (std::sin(p.lat * kDeg) - s0) / c0; };
  double a2 = 0, mx = 0, my = 0;
  for (std::size_t i = 0; i + 1 < ring.size(); ++i) {
    const double x0 = x_of(ring[i]), y0 = y_of(ring[i]);
    const double x1 = x_of(ring[i + 1]), y1 = y_of(ring[i + 1]);
    const double cross = x0 * y1 - x1 * y0;
    a2 += cross;
    mx += (x0 + x1) * cross;
    my += (y0 + y1) * cross;
  }
  RingMoments m;
  m.area = a2 / 2;
  if (a2 != 0) {
    m.cx = mx / (3 * a2);
    m.cy = my / (3 * a2);
  }
  return m;
}

}  // namespace

LocalMetric LocalMetric::at(double lat_deg) noexcept {
  const double s = std::sin(lat_deg * kDeg), c = std::cos(lat_deg * kDeg);
  const double w2 = 1 - kWgs84E2 * s * s;
  const double n = kWgs84A / std::sqrt(w2);                  // prime vertical radius
  const double m = kWgs84A * (1 - kWgs84E2) / (w2 * std::sqrt(w2));  // meridional radius
  return {n * c * kDeg, m * kDeg};
}

void compute_metrics(Reef& reef) {
  double area_m2 = 0, perimeter_m = 0;
  reef.lon_min = reef.lat_min = std::numeric_limits<double>::infinity();
  reef.lon_max = reef.lat_max = -std::numeric_limits<double>::infinity();
  for (const auto& part : reef.parts) {
    for (const auto& p : part.outer) {
      reef.lon_min = std::min(reef.lon_min, p.lon);
      reef.lon_max = std::max(reef.lon_max, p.lon);
      reef.lat_min = std::min(reef.lat_min, p.lat);
      reef.lat_max = std::max(reef.lat_max, p.lat);
    }
    double a = 0, l = 0;
    ring_area_perimeter(part.outer, a, l);
    area_m2 += a;
    perimeter_m += l;
    for (const auto& hole : part.holes) {
      ring_area_perimeter(hole, a, l);
      area_m2 -= a;
      perimeter_m += l;
    }
  }
  reef.area_ha = area_m2 / 1e4;
  reef.perimeter_km = perimeter_m / 1e3;

  // Area centroid: outer rings weigh +|A|, holes -|A|.
  const double lon0 = (reef.lon_min + reef.lon_max) / 2, lat0 = (reef.lat_min + reef.lat_max) / 2;
  double w = 0, wx = 0, wy = 0;
  for (const auto& part : reef.parts) {
    const RingMoments outer = ring_moments(part.outer, lon0, lat0);
    w += std::abs(outer.area);
    wx += std::abs(outer.area) * outer.cx;
    wy += std::abs(outer.area) * outer.cy;
    for (const auto& hole : part.holes) {
      const RingMoments h = ring_moments(hole, lon0, lat0);
      w -= std::abs(h.area);
      wx -= std::abs(h.area) * h.cx;
      wy -= std::abs(h.area) * h.cy;
    }
  }
  if (w > 0) {
    const double c0 = std::cos(lat0 * kDeg), s0 = std::sin(lat0 * kDeg);
    reef.centroid.lon = lon0 + (wx / w) / (c0 * kDeg);
    reef.centroid.lat = std::asin(std::clamp(wy / w * c0 + s0, -1.0, 1.0)) / kDeg;
  } else {
    reef.centroid = {lon0, lat0};
  }
}

namespace {
bool ring_crossings(const Ring& ring, LonLat p) noexcept {
  bool inside = false;
  for (std::size_t i = 0; i + 1 < ring.size(); ++i) {
    const LonLat& a = ring[i];
    const LonLat& b = ring[i + 1];
    if ((a.lat > p.lat) != (b.lat > p.lat)) {
      const double x = a.lon + (p.lat - a.lat) * (b.lon - a.lon) / (b.lat - a.lat);
      if (p.lon < x) inside = !inside;
    }
  }
  return inside;
}
}  // namespace

bool contains(const Polygon& polygon, LonLat point) noexcept {
  bool inside = ring_crossings(polygon.outer, point);
  for (const auto& hole : polygon.holes) inside ^= ring_crossings(hole, point);
  return inside;
}

bool contains(const Reef& reef, LonLat point) noexcept {
  if (point.lon < reef.lon_min || point.lon > reef.lon_max || point.lat < reef.lat_min ||
      point.lat > reef.lat_max) {
    return false;
  }
  bool inside = false;
  for (const auto& part : reef.parts) inside ^= contains(part, point);
  return inside;
}

double geodesic_distance_m(LonLat a, LonLat b) {
  double s12 = 0;
  GeographicLib::Geodesic::WGS84().Inverse(a.lat, a.lon, b.lat, b.lon, s12);
  return s12;
}

double distance_to_edge_m(const Reef& reef, LonLat point) {
  const LocalMetric m = LocalMetric::at(point.lat);
  double best = std::numeric_limits<double>::infinity();
  LonLat nearest = point;
  auto visit = [&](const Ring& ring) {
    for (std::size_t i = 0; i + 1 < ring.size(); ++i) {
      const double ax = (ring[i].lon - point.lon) * m.m_per_deg_lon;
      const double ay = (ring[i].lat - point.lat) * m.m_per_deg_lat;
      const double bx = (ring[i + 1].lon - point.lon) * m.m_per_deg_lon;
      const double by = (ring[i + 1].lat - point.lat) * m.m_per_deg_lat;
      const double dx = bx - ax, dy = by - ay;
      const double len2 = dx * dx + dy * dy;
      double t = len2 > 0 ? -(ax * dx + ay * dy) / len2 : 0.0;
      t = std::clamp(t, 0.0, 1.0);
      const double qx = ax + t * dx, qy = ay + t * dy;
      const double d2 = qx * qx + qy * qy;
      if (d2 < best) {
        best = d2;
        nearest = {ring[i].lon + t * (ring[i + 1].lon - ring[i].lon),
                   ring[i].lat + t * (ring[i + 1].lat - ring[i].lat)};
      }
    }
  };
  for (const auto& part : reef.parts) {
    visit(part.outer);
    for (const auto& hole : part.holes) visit(hole);
  }
  if (!std::isfinite(best)) return best;
  return geodesic_distance_m(point, nearest);
}

namespace planar {

double segment_distance2(double px, double py, double ax, double ay, double bx,
                         double by) noexcept {
  const double dx = bx - ax, dy = by - ay;
  const double len2 = dx * dx + dy * dy;
  double t = len2 > 0 ? ((px - ax) * dx + (py - ay) * dy) / len2 : 0.0;
  t = std::clamp(t, 0.0, 1.0);
  const double ex = ax + t * dx - px, ey = ay + t * dy - py;
  return ex * ex + ey * ey;
}

bool segment_meets_rect(double ax, double ay, double bx, double by, double x0, double y0,
                        double x1, double y1) noexcept {
  // Liang-Barsky clipping of the segment against the rectangle.
  double t0 = 0, t1 = 1;
  const double dx = bx - ax, dy = by - ay;
  const double p[4] = {-dx, dx, -dy, dy};
  const double q[4] = {ax - x0, x1 - ax, ay - y0, y1 - ay};
  for (int i = 0; i < 4; ++i) {
    if (p[i] == 0) {
      if (q[i] < 0) return false;
    } else {
      const double r = q[i] / p[i];
      if (p[i] < 0) {
        t0 = std::max(t0, r);
      } else {
        t1 = std::min(t1, r);
      }
      if (t0 > t1) return false;
    }
  }
  return true;
}

double segment_rect_distance(double ax, double ay, double bx, double by, double x0, double y0,
                             double x1, double y1) noexcept {
  if (segment_meets_rect(ax, ay, bx, by, x0, y0, x1, y1)) return 0.0;
  // Disjoint convex sets: the nearest pair has a vertex of one of them.
  double d2 = std::min({segment_distance2(x0, y0, ax, ay, bx, by),
                        segment_distance2(x1, y0, ax, ay, bx, by),
                        segment_distance2(x0, y1, ax, ay, bx, by),
                        segment_distance2(x1, y1, ax, ay, bx, by)});
  auto point_rect2 = [&](double px, double py) {
    const double ex = px < x0 ? x0 - px : (px > x1 ? px - x1 : 0.0);
    const double ey = py < y0 ? y0 - py : (py > y1 ? py - y1 : 0.0);
    return ex * ex + ey * ey;
  };
  d2 = std::min({d2, point_rect2(ax, ay), point_rect2(bx, by)});
  return std::sqrt(d2);
}

}  // namespace planar

std::vector<int> reefs_outside(const ReefSet& reefs, double lon_min, double lon_max,
                               double lat_min, double lat_max) {
  std::vector<int> outside;
  for (std::size_t k = 0; k < reefs.size(); ++k) {
    const Reef& r = reefs.reefs()[k];
    bool touches = !(r.lon_max < lon_min || r.lon_min > lon_max || r.lat_max < lat_min ||
                     r.lat_min > lat_max);
    if (touches) {
      // Boxes overlap: the reef meets the box iff an edge meets it or the box
      // lies inside the reef (then its corner is inside).
      touches = contains(r, {lon_min, lat_min});
      auto check = [&](const Ring& ring) {
        for (std::size_t i = 0; !touches && i + 1 < ring.size(); ++i) {
          touches = planar::segment_meets_rect(ring[i].lon, ring[i].lat, ring[i + 1].lon,
                                               ring[i + 1].lat, lon_min, lat_min, lon_max,
                                               lat_max);
        }
      };
      for (const auto& part : r.parts) {
        check(part.outer);
        for (const auto& hole : part.holes) check(hole);
      }
    }
    if (!touches) outside.push_back(static_cast<int>(k));
  }
  return outside;
}

}  // namespace cullcast::reefs
