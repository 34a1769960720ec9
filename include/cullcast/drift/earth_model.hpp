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

  // Degrees per metre east and north near a reference latitude. The drift
  // step asks for these at every RK stage; the stages lie within a fraction
  // of a degree of the step's start, so sin and cos there come from a Taylor
  // expansion about the start (error below 1e-15 for offsets under 0.01 rad,
  // exact library calls beyond that) instead of new library calls.
  class Local {
   public:
    Local(const EarthModel& earth, double lat0_deg) noexcept
        : earth_(earth), lat0_(lat0_deg), s0_(std::sin(lat0_deg * kRad)), c0_(std::cos(lat0_deg * kRad)) {}
    // {degrees east per metre, degrees north per metre} at latitude lat_deg.
    void degrees_per_metre(double lat_deg, double& east, double& north) const noexcept {
      double s, c;
      const double d = (lat_deg - lat0_) * kRad;
      if (std::fabs(d) < 0.01) {
        const double d2 = d * d;
        const double cd = 1 - d2 * (0.5 - d2 * (1.0 / 24 - d2 * (1.0 / 720)));
        const double sd = d * (1 - d2 * (1.0 / 6 - d2 * (1.0 / 120 - d2 * (1.0 / 5040))));
        s = s0_ * cd + c0_ * sd;
        c = c0_ * cd - s0_ * sd;
      } else {
        s = std::sin(lat_deg * kRad);
        c = std::cos(lat_deg * kRad);
      }
      earth_.degrees_per_metre_at(s, c, east, north);
    }

   private:
    const EarthModel& earth_;
    double lat0_, s0_, c0_;
  };
  Local near(double lat0_deg) const noexcept { return Local(*this, lat0_deg); }

  // {degrees east per metre, degrees north per metre} from the sine and
  // cosine of the latitude (callers that already have them).
  void degrees_per_metre_at(double sin_lat, double cos_lat, double& east, double& north) const noexcept {
    if (e2_ == 0) {
      north = 1.0 / (a_ * kRad);
      east = north / cos_lat;
      return;
    }
    const double w = 1 - e2_ * sin_lat * sin_lat, root = std::sqrt(w);
    north = w * root / (a_ * (1 - e2_) * kRad);
    east = root / (a_ * cos_lat * kRad);
  }
  double equatorial_radius_m() const noexcept { return a_; }
  double eccentricity_squared() const noexcept { return e2_; }

 private:
  static constexpr double kRad = 3.14159265358979323846 / 180.0;
  EarthModel(double a, double e2) : a_(a), e2_(e2) {}
  double a_;   // equatorial radius (sphere radius), metres
  double e2_;  // first eccentricity squared (0 for a sphere)
};

}  // namespace cullcast::drift
