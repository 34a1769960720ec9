#pragma once
// Optional physics of the drift step, switched on per scenario: varying Kh
// (NetCDF field or Smagorinsky closure), depth behaviour and vertical motion,
// temperature- and food-dependent development. drift_step() takes these as a
// template argument: with NoExtras the compiler removes every branch below,
// so the 2-D constant-Kh path stays exactly the core's.
//
// Smagorinsky closure: Smagorinsky (1963), Mon. Weather Rev. 91:99–164, in the
// form used by ocean models for the horizontal viscosity/diffusivity
//   Kh = C·Δx·Δy·sqrt((∂u/∂x)² + (∂v/∂y)² + ½(∂u/∂y + ∂v/∂x)²)
// (e.g. the Princeton Ocean Model user guide, Mellor 2004 — from memory), with
// C = 0.1 by default ("common practice, no source"; values 0.05–0.2 are
// used). Δx·Δy is the grid cell area (the currents' mean node spacing
// squared); the gradients are central differences over one node spacing.
//
// Every varying-diffusivity walk uses the drift-corrected step of Visser
// (1997), Mar. Ecol. Prog. Ser. 158:275–281 (visser_walk.hpp), per axis.
#include <cmath>
#include <cstdint>
#include <limits>

#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/depth_behaviour.hpp"
#include "cullcast/drift/earth_model.hpp"
#include "cullcast/drift/integrator.hpp"
#include "cullcast/drift/larval_environment.hpp"
#include "cullcast/drift/visser_walk.hpp"

namespace cullcast::drift {

struct NoExtras {
  static constexpr bool active = false;
};

enum class KhMode : std::uint8_t { constant, field, smagorinsky };
enum class KvMode : std::uint8_t { constant, field };

// Smagorinsky Kh (m2 s-1) at a point from a Flow's velocities.
template <class Flow>
double smagorinsky_kh(const Flow& flow, double t_s, double lon, double lat, double depth_m,
                      const EarthModel::Local& metric, double spacing_m, double c) noexcept {
  double east, north;
  metric.degrees_per_metre(lat, east, north);
  const double dlon = spacing_m * east, dlat = spacing_m * north;
  const auto e = flow.sample(t_s, lon + dlon, lat, depth_m), w = flow.sample(t_s, lon - dlon, lat, depth_m);
  const auto n = flow.sample(t_s, lon, lat + dlat, depth_m), s = flow.sample(t_s, lon, lat - dlat, depth_m);
  const double inv = 1.0 / (2 * spacing_m);
  const double ux = (e.u_m_s - w.u_m_s) * inv, vx = (e.v_m_s - w.v_m_s) * inv;
  const double uy = (n.u_m_s - s.u_m_s) * inv, vy = (n.v_m_s - s.v_m_s) * inv;
  const double shear = uy + vx;
  return c * spacing_m * spacing_m * std::sqrt(ux * ux + vy * vy + 0.5 * shear * shear);
}

// Fields: provides (all noexcept; NaN = unknown)
//   double kh(double lon, double lat, double depth_m) const;   m2 s-1
//   double kv(double lon, double lat, double depth_m) const;   m2 s-1
//   double sea_floor_m(double lon, double lat) const;          metres, +inf unknown
//   double temperature_c(double t_s, double lon, double lat, double depth_m) const;
//   double chlorophyll_mg_m3(double t_s, double lon, double lat, double depth_m) const;
template <class Fields>
struct StepExtras {
  static constexpr bool active = true;
  const Fields* fields = nullptr;
  KhMode kh_mode = KhMode::constant;
  double kh_m2_s = 0;              // constant Kh, and the fall-back where a field is NaN
  double smagorinsky_c = 0.1;
  double spacing_m = 1000;         // grid spacing: Smagorinsky Δ and finite-difference step
  KvMode kv_mode = KvMode::constant;
  double kv_m2_s = 0;              // constant Kv, and the fall-back where a field is NaN
  DepthRule depth;
  LarvalEnvironment environment{study::LarvaeSettings{}, false, false};

  bool kh_varies() const noexcept { return kh_mode != KhMode::constant; }

  template <class Flow>
  double kh_at(const Flow& flow, double t_s, double lon, double lat, double depth_m,
               const EarthModel::Local& metric) const noexcept {
    double k = kh_mode == KhMode::field
                   ? fields->kh(lon, lat, depth_m)
                   : smagorinsky_kh(flow, t_s, lon, lat, depth_m, metric, spacing_m, smagorinsky_c);
    return std::isnan(k) ? kh_m2_s : std::fmax(k, 0.0);
  }

  // Drift-corrected horizontal walk (Visser 1997 per axis) applied to x (degrees).
  template <class Flow>
  void walk_horizontal(const Flow& flow, double t_s, Vec2& x, double depth_m,
                       const EarthModel::Local& metric, const std::array<double, 2>& r,
                       double dt_s) const noexcept {
    double east, north;
    metric.degrees_per_metre(x[1], east, north);
    const double h = 0.5 * spacing_m;  // finite-difference half-step, metres
    const double dkdx = (kh_at(flow, t_s, x[0] + h * east, x[1], depth_m, metric) -
                         kh_at(flow, t_s, x[0] - h * east, x[1], depth_m, metric)) / (2 * h);
    const double dkdy = (kh_at(flow, t_s, x[0], x[1] + h * north, depth_m, metric) -
                         kh_at(flow, t_s, x[0], x[1] - h * north, depth_m, metric)) / (2 * h);
    const double km = kh_at(flow, t_s, x[0] + 0.5 * dkdx * dt_s * east,
                            x[1] + 0.5 * dkdy * dt_s * north, depth_m, metric);
    const double sd = std::sqrt(2.0 * km * dt_s);
    x[0] += (dkdx * dt_s + r[0] * sd) * east;
    x[1] += (dkdy * dt_s + r[1] * sd) * north;
  }

  // New depth after one step at horizontal position x (already moved).
  // `age_s` sets the band; `r` is one standard normal draw.
  // `backward`: a step of backward drift (backward_drift.hpp): advection by
  // −w; the walk is unchanged (its drift correction keeps its sign in the
  // adjoint equation).
  template <class Flow>
  double move_vertically(const Flow& flow, double t_mid_s, double dt_s, const Vec2& x, double z,
                         double age_s, double r, bool backward = false) const noexcept {
    const DepthMode mode = depth.mode();
    const DepthBand band = depth.band_at(age_s);
    if (mode == DepthMode::fixed) return depth.has_table() ? 0.5 * (band.top_m + band.bottom_m) : z;
    if (mode == DepthMode::band) {
      if (z < band.top_m || z > band.bottom_m) return z + depth.swim_towards(z, band, dt_s);
      return reflect_into(z + r * std::sqrt(2.0 * kv_m2_s * dt_s), band.top_m, band.bottom_m);
    }
    // Full 3-D: advection by w (upward positive, so depth decreases), random
    // walk, behaviour, reflection at the surface and the sea floor.
    double bottom = fields ? fields->sea_floor_m(x[0], x[1]) : std::numeric_limits<double>::infinity();
    if (std::isnan(bottom)) bottom = z;  // no wet level known here: stay
    const double w = flow.sample(t_mid_s, x[0], x[1], z).w_m_s;
    double znew = backward ? z + w * dt_s : z - w * dt_s;
    if (kv_mode == KvMode::field) {
      auto kv_value = [&](double zz) {
        const double k = fields->kv(x[0], x[1], zz);
        return std::isnan(k) ? kv_m2_s : std::fmax(k, 0.0);
      };
      auto kv_point = [&](double zz) { return with_gradient(zz, 0.5, kv_value); };
      znew = visser_step(znew, dt_s, r, kv_point);
    } else {
      znew += r * std::sqrt(2.0 * kv_m2_s * dt_s);
    }
    if (depth.has_table()) znew += depth.swim_towards(z, band, dt_s);
    return std::isinf(bottom) ? std::fabs(znew) : reflect_into(znew, 0.0, bottom);
  }
};

}  // namespace cullcast::drift
