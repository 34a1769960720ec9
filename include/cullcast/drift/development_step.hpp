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

// What a larva met over one step, where it ended it (lon, lat) at the step's
// middle: the development rate factor at the temperature there, and log2 of
// the chlorophyll there, needed only before competency. Computed apart from
// develop() so that grid_stepper.cpp can compute them for a whole batch at
// once (the exponentials and logarithms of successive larvae then run side
// by side). Fields: double temperature_c(t_s, lon, lat, depth_m) and
// double chlorophyll_mg_m3(t_s, lon, lat, depth_m), both noexcept (NaN = unknown).
struct Conditions {
  double rate = 1.0;       // LarvalEnvironment::development_rate
  double food_log2 = 0.0;  // LarvalEnvironment::food_log2 (0 when not needed)
};

// Whether the larva's food counts this step (it is not competent yet).
inline bool feeds(const LarvalEnvironment& environment, const LarvalClock& clock, double development_s) noexcept {
  return environment.food_on() && development_s < clock.precompetent_s();
}

template <class Fields>
inline Conditions conditions_at(const LarvalEnvironment& environment, const LarvalClock& clock, const Fields& fields,
                                double development_s, double t_mid_s, double lon, double lat,
                                double depth_m) noexcept {
  Conditions c;
  if (environment.temperature_on()) {
    c.rate = environment.development_rate(fields.temperature_c(t_mid_s, lon, lat, depth_m));
  }
  if (feeds(environment, clock, development_s)) {
    c.food_log2 = environment.food_log2(fields.chlorophyll_mg_m3(t_mid_s, lon, lat, depth_m));
  }
  return c;
}

// The step of larva i given what it met (conditions_at() at p.development_s[i]);
// `age1_s`: its real age at the step's end. Returns the development age at
// the step's end, or a negative value when the larva died failing to
// complete development (p.fate[i] is then set).
inline double develop(ParticleSet& p, std::int64_t i, const StreamId& id, std::uint32_t step,
                      const LarvalEnvironment& environment, const Conditions& met, double dt_s, double age1_s,
                      const LarvalClock& clock, const CounterRandom& rng) noexcept {
  const double dev0 = p.development_s[i];
  const double dev1 = dev0 + met.rate * dt_s;
  p.development_s[i] = static_cast<float>(dev1);
  if (feeds(environment, clock, dev0)) {
    p.food_log2_s[i] += static_cast<float>(met.food_log2 * dt_s);
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
