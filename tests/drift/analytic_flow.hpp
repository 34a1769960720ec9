#pragma once
// Velocity fields given by formulas, with the Flow interface of drift_step:
// the analytic reference against which the drift engine is checked.
#include <cmath>

#include "cullcast/currents/current_field.hpp"

namespace cullcast::test {

struct LonLatBox {
  double lon_min = -1e9, lon_max = 1e9, lat_min = -89.9, lat_max = 89.9;
  bool contains(double lon, double lat) const {
    return lon >= lon_min && lon <= lon_max && lat >= lat_min && lat <= lat_max;
  }
};

// `Velocity` is callable as (t_s, lon_deg, lat_deg) -> std::array<double,2>{u, v} in m/s.
template <class Velocity>
struct AnalyticFlow {
  Velocity velocity;
  LonLatBox domain;                 // outside: status outside
  LonLatBox land{0, -1, 0, -1};     // empty by default

  currents::SampleStatus status(double lon, double lat) const noexcept {
    if (!domain.contains(lon, lat)) return currents::SampleStatus::outside;
    if (land.contains(lon, lat)) return currents::SampleStatus::land;
    return currents::SampleStatus::water;
  }
  currents::FlowSample sample(double t, double lon, double lat, double) const noexcept {
    const auto uv = velocity(t, lon, lat);
    return {uv[0], uv[1], 0.0, status(lon, lat)};
  }
};

template <class Velocity>
AnalyticFlow<Velocity> make_flow(Velocity v, LonLatBox domain = {}) {
  return AnalyticFlow<Velocity>{v, domain};
}

// Reef look-up for engine tests: every position within a lon/lat box is reef
// `index`, elsewhere none.
struct BoxReef {
  LonLatBox box;
  int index = 0;
  int reef_at(double lon, double lat) const noexcept { return box.contains(lon, lat) ? index : -1; }
};

}  // namespace cullcast::test
