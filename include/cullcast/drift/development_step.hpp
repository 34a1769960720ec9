#pragma once
// A larva's development over one step when temperature and/or food act
// (larval_environment.hpp): development age advances at the temperature met
// at the step's middle; before competency the food met is summed as log2
// chlorophyll; on reaching competency development is completed with the
// food-dependent probability (a weight factor, or a draw under random
// deaths). One rule for both step paths (drift_step.hpp, grid_stepper.hpp).
#include <cstdint>

#include "cullcast/base/random.hpp"
#include "cullcast/drift/larval_clock.hpp"
#include "cullcast/drift/larval_environment.hpp"
#include "cullcast/drift/particles.hpp"

namespace cullcast::drift {

// Fields: double temperature_c(t_s, lon, lat, depth_m) and
// double chlorophyll_mg_m3(t_s, lon, lat, depth_m), both noexcept (NaN = unknown).
// `t_mid_s`: model time at the step's middle; (lon, lat): where the larva
// ended the step; `age1_s`: its real age at the step's end. Returns the
// development age at the step's end, or a negative value when the larva died
// failing to complete development (p.fate[i] is then set).
template <class Fields>
inline double develop(ParticleSet& p, std::int64_t i, const StreamId& id, std::uint32_t step,
                      const LarvalEnvironment& environment, const Fields& fields, double t_mid_s, double lon,
                      double lat, double depth_m, double dt_s, double age1_s, const LarvalClock& clock,
                      const CounterRandom& rng) noexcept {
  const double dev0 = p.development_s[i];
  const double rate = environment.temperature_on()
                          ? environment.development_rate(fields.temperature_c(t_mid_s, lon, lat, depth_m))
                          : 1.0;
  const double dev1 = dev0 + rate * dt_s;
  p.development_s[i] = static_cast<float>(dev1);
  if (environment.food_on() && dev0 < clock.precompetent_s()) {
    const double chl = fields.chlorophyll_mg_m3(t_mid_s, lon, lat, depth_m);
    p.food_log2_s[i] += static_cast<float>(environment.food_log2(chl) * dt_s);
    if (dev1 >= clock.precompetent_s()) {  // reaches competency now: development completed?
      const double complete = environment.completion_from_log2(p.food_log2_s[i] / age1_s);
      if (clock.random_deaths()) {
        if (rng.uniform2(id, step, Draw::mortality)[1] >= complete) {
          p.fate[i] = Fate::died;
          return -1.0;
        }
      } else {
        p.weight[i] *= complete;
      }
    }
  }
  return dev1;
}

}  // namespace cullcast::drift
