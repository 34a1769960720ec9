#pragma once
// Geometry on reef outlines: geodesic area and perimeter on the WGS84
// ellipsoid (GeographicLib, after Karney 2013, "Algorithms for geodesics",
// J. Geodesy 87:43-55), point-in-polygon, distance to a reef's edge, and a
// local metric (metres per degree) for short distances.
//
// Edges are straight lines in lon/lat, as in GIS files. Over a reef (a few km)
// such a line and the geodesic between its ends differ by millimetres.
// Reefs must not cross the antimeridian (longitudes are not wrapped).
#include <vector>

#include "cullcast/reefs/reef_set.hpp"

namespace cullcast::reefs {

// Metres per degree at one latitude on the WGS84 ellipsoid, from the
// meridional (M) and prime-vertical (N) radii of curvature:
// x_m = dlon * N cos(lat) * pi/180, y_m = dlat * M * pi/180.
// Relative error of distances measured with it, over a distance d from the
// reference latitude: about (d / 6371 km) in the scale plus (d / R)^2 from
// curvature: under 1e-3 relative within 5 km at tropical latitudes.
struct LocalMetric {
  double m_per_deg_lon = 0;  // metres per degree of longitude
  double m_per_deg_lat = 0;  // metres per degree of latitude
  static LocalMetric at(double lat_deg) noexcept;
};

// Fills area_ha, perimeter_km, centroid and the bounding box from `parts`.
// Area: |outer| - sum |holes| per part, geodesic (GeographicLib PolygonArea).
// Perimeter: all rings, holes included. Centroid: area centroid computed in a
// local Lambert cylindrical equal-area frame centred on the reef.
void compute_metrics(Reef& reef);

// Even-odd crossing test over every ring of every part (holes respected).
// Points exactly on an edge may fall either way.
bool contains(const Reef& reef, LonLat point) noexcept;
bool contains(const Polygon& polygon, LonLat point) noexcept;

// Geodesic distance (WGS84) between two points, metres.
double geodesic_distance_m(LonLat a, LonLat b);

// Distance from `point` to the nearest point of the reef's boundary (any
// ring), metres: the nearest point on each edge is found in the local metric
// at `point`, then measured with a WGS84 geodesic. Accurate to well under a
// metre within 10 km. Returns 0 inside? No: the distance to the edge, whether
// the point is inside or outside (use contains() to tell which).
double distance_to_edge_m(const Reef& reef, LonLat point);

// Indices of reefs lying wholly outside the box [lon_min, lon_max] x
// [lat_min, lat_max] (degrees), e.g. outside the currents grid. A reef
// touching or crossing the box is not reported.
std::vector<int> reefs_outside(const ReefSet& reefs, double lon_min, double lon_max,
                               double lat_min, double lat_max);

// Planar helpers shared by the look-up index, in any affine frame.
namespace planar {
// Squared distance from point (px, py) to segment (ax, ay)-(bx, by).
double segment_distance2(double px, double py, double ax, double ay, double bx, double by) noexcept;
// Does segment (ax, ay)-(bx, by) meet the closed rectangle [x0, x1] x [y0, y1]?
bool segment_meets_rect(double ax, double ay, double bx, double by, double x0, double y0,
                        double x1, double y1) noexcept;
// Smallest distance between a segment and a closed rectangle (0 when they meet).
double segment_rect_distance(double ax, double ay, double bx, double by, double x0, double y0,
                             double x1, double y1) noexcept;
}  // namespace planar

}  // namespace cullcast::reefs
