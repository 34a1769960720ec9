#pragma once
// Metres <-> degrees, in one place, with the Earth model named.
//  - sphere of radius R: 1 degree of latitude = R·π/180 m; of longitude = R·cos φ·π/180 m.
//  - WGS84 ellipsoid (a = 6378137 m, f = 1/298.257223563; NIMA TR8350.2, 3rd ed.,
//    2000, §3): meridional radius M = a(1−e²)/(1−e² sin²φ)^{3/2} and prime-vertical
//    radius N = a/(1−e² sin²φ)^{1/2}; 1° lat = M·π/180 m, 1° lon = N·cos φ·π/180 m.
#include <cmath>
#include <string_view>

namespace cullcast::drift {

class EarthModel {
 public:
  static EarthModel sphere(double radius_m) { return EarthModel(radius_m, 0.0); }
  static EarthModel wgs84() {
    constexpr double a = 6378137.0, f = 1.0 / 298.257223563;
    return EarthModel(a, f * (2 - f));
  }
  // "sphere" (with the given radius) or "wgs84".
  static EarthModel from_name(std::string_view name, double sphere_radius_m) {
    return name == "wgs84" ? wgs84() : sphere(sphere_radius_m);
  }

  // Metres per degree northward and eastward at latitude `lat_deg`.
  double metres_per_degree_lat(double lat_deg) const noexcept {
    if (e2_ == 0) return a_ * kRad;
    const double s = std::sin(lat_deg * kRad);
    const double w = 1 - e2_ * s * s;
    return a_ * (1 - e2_) / (w * std::sqrt(w)) * kRad;
  }
  double metres_per_degree_lon(double lat_deg) const noexcept {
    const double c = std::cos(lat_deg * kRad);
    if (e2_ == 0) return a_ * c * kRad;
    const double s = std::sin(lat_deg * kRad);
    return a_ / std::sqrt(1 - e2_ * s * s) * c * kRad;
  }
  bool is_sphere() const noexcept { return e2_ == 0; }
  double equatorial_radius_m() const noexcept { return a_; }

 private:
  static constexpr double kRad = 3.14159265358979323846 / 180.0;
  EarthModel(double a, double e2) : a_(a), e2_(e2) {}
  double a_;   // equatorial radius (sphere radius), metres
  double e2_;  // first eccentricity squared (0 for a sphere)
};

}  // namespace cullcast::drift
