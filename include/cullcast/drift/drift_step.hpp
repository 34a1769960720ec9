#pragma once
// One time step for every particle of an event: release, advection, random
// walk, land and grid boundaries, ageing, mortality, settlement.
//
// Templated on the flow and the reef look-up so the hot loop has no virtual
// call: production uses currents::CurrentField and reefs::ReefLookup; tests
// use analytic flows. A Flow has
//   currents::FlowSample sample(double t_s, double lon, double lat, double depth_m) const noexcept;
//   currents::SampleStatus status(double lon, double lat) const noexcept;
// and a Lookup has  int reef_at(double lon, double lat) const noexcept.
//
// Rules (docs/methods.md):
//  - release: a particle enters the water at the first step boundary at or
//    after its release time; its age counts from that boundary.
//  - advection: the chosen scheme in lon/lat, velocities converted with the
//    EarthModel at each stage's latitude.
//  - random walk: Gaussian steps of variance 2·Kh·dt per axis (metres), after
//    advection (Hunter, Craig & Phillips 1993, J. Comput. Phys. 106:366–376).
//  - outside the grid at the end of a step: lost. On land: "hold" keeps the
//    position of the step's start (a land contact is counted); "strand" ends
//    the particle as stranded.
//  - then ageing; mortality (weight decay or a death draw); settlement when
//    competent and over a reef at the end of the step; death when older than
//    the end of competency.
//  - with StepExtras (step_extras.hpp): varying Kh replaces the constant-Kh
//    walk (drift-corrected, Visser 1997); the depth moves after the
//    horizontal step (fixed/band/3-D, docs/methods.md "Depth"; the horizontal
//    RK stages use the depth at the step's start); with temperature/food,
//    competency and the end of competency follow the development age, and
//    development is completed with the food-dependent probability when the
//    larva reaches competency (weight factor, or a draw under random deaths).
#include <cmath>
#include <cstdint>

#include "cullcast/base/random.hpp"
#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/development_step.hpp"
#include "cullcast/drift/earth_model.hpp"
#include "cullcast/drift/integrator.hpp"
#include "cullcast/drift/larval_clock.hpp"
#include "cullcast/drift/particles.hpp"
#include "cullcast/drift/step_end.hpp"
#include "cullcast/drift/step_extras.hpp"

namespace cullcast::drift {

enum class LandRule : std::uint8_t { hold, strand };

struct StepSettings {
  double event_start_s = 0;  // model seconds of the event start
  double dt_s = 600;         // step length, seconds
  double kh_m2_s = 0;        // horizontal eddy diffusivity
  Scheme scheme = Scheme::rk4;
  LandRule land = LandRule::hold;
  std::uint32_t event = 0;   // event index (random streams)
};

// Per-step tallies, summed over threads (integers and max only: deterministic).
struct StepTally {
  std::uint64_t particle_steps = 0;  // particles advanced this step
  std::uint64_t land_contacts = 0;   // steps held back from land
  std::uint64_t released = 0;
  std::uint64_t settled = 0;
  std::uint64_t died = 0;
  std::uint64_t stranded = 0;
  std::uint64_t lost = 0;
  double max_speed_m_s = 0;          // largest current speed met (for the Courant check)
};

template <class Flow, class Lookup, class Extras>
StepTally drift_step(ParticleSet& p, std::uint32_t step, const StepSettings& s,
                     const LarvalClock& clock, const EarthModel& earth, const Flow& flow,
                     const Lookup& reefs, const CounterRandom& rng,
                     std::vector<std::uint8_t>& settled_now, const Extras& extras) {
  const double t0 = step * s.dt_s;                 // seconds since event start
  const double t0_model = s.event_start_s + t0;
  const double t1 = t0 + s.dt_s;
  const double walk = std::sqrt(2.0 * s.kh_m2_s * s.dt_s);  // metres, one standard deviation
  const double settle_p = clock.settle_probability(s.dt_s);
  // Constant hazard: the same survival factor every step (one exp, not one per particle).
  const double constant_survive = clock.step_survival(0.0, s.dt_s);
  const bool constant_hazard = clock.constant_hazard();
  const std::int64_t n = static_cast<std::int64_t>(p.size());
  settled_now.assign(p.size(), 0);

  std::uint64_t particle_steps = 0, land_contacts = 0, released = 0, settled = 0, died = 0,
                stranded = 0, lost = 0;
  double max_speed = 0;

  // Chunks handed out as threads finish: larvae leave the grid or settle
  // unevenly along the array, so equal static shares would leave one thread
  // idle. Each particle's result is its own (and the tallies are sums and a
  // maximum), so the schedule does not change a bit.
#pragma omp parallel for schedule(dynamic, 512) if (n > 4096) reduction(+ : particle_steps, land_contacts, \
                                                        released, settled, died, stranded, lost)        \
    reduction(max : max_speed)
  for (std::int64_t i = 0; i < n; ++i) {
    Fate fate = p.fate[i];
    if (fate == Fate::waiting) {
      if (p.release_s[i] > t0) continue;
      fate = Fate::drifting;
      p.release_s[i] = static_cast<float>(t0);
      ++released;
    }
    if (fate != Fate::drifting) continue;
    ++particle_steps;
    const double depth = p.depth_m[i];
    const Vec2 start{p.lon[i], p.lat[i]};
    double speed_seen = 0;
    const EarthModel::Local metric = earth.near(start[1]);
    auto rate = [&](double t, const Vec2& x) noexcept -> Vec2 {
      const currents::FlowSample f = flow.sample(t, x[0], x[1], depth);
      const double speed = std::fabs(f.u_m_s) + std::fabs(f.v_m_s);
      speed_seen = speed > speed_seen ? speed : speed_seen;  // not fmax: no libm call
      double east, north;
      metric.degrees_per_metre(x[1], east, north);
      return {f.u_m_s * east, f.v_m_s * north};
    };
    Vec2 x = advance(s.scheme, rate, t0_model, start, s.dt_s);
    max_speed = speed_seen > max_speed ? speed_seen : max_speed;
    const StreamId id{s.event, p.source[i], p.index[i]};
    bool walked = false;
    if constexpr (Extras::active) {
      if (extras.kh_varies()) {
        extras.walk_horizontal(flow, t0_model + s.dt_s, x, depth, metric,
                               rng.walk_normal2(id, step), s.dt_s);
        walked = true;
      }
    }
    if (!walked && walk > 0) {
      const auto z = rng.walk_normal2(id, step);
      double east, north;
      metric.degrees_per_metre(x[1], east, north);
      x[0] += z[0] * walk * east;
      x[1] += z[1] * walk * north;
    }
    const currents::SampleStatus where = flow.status(x[0], x[1]);
    if (where == currents::SampleStatus::outside) {
      p.lon[i] = x[0];
      p.lat[i] = x[1];
      p.fate[i] = Fate::lost;
      ++lost;
      continue;
    }
    if (where == currents::SampleStatus::land) {
      ++land_contacts;
      if (s.land == LandRule::strand) {
        p.fate[i] = Fate::stranded;
        ++stranded;
        continue;
      }
      x = start;  // hold: the step is undone
    }
    p.lon[i] = x[0];
    p.lat[i] = x[1];

    const double age0 = t0 - p.release_s[i];
    const double age1 = t1 - p.release_s[i];
    double dev1 = age1;  // development age: the real age unless temperature/food act
    if constexpr (Extras::active) {
      if (extras.depth.moves()) {
        const double r = rng.normal2(id, step, Draw::vertical)[0];
        p.depth_m[i] = static_cast<float>(
            extras.move_vertically(flow, t0_model + 0.5 * s.dt_s, s.dt_s, x, depth, age0, r));
      }
      if (extras.environment.any()) {
        const Conditions met = conditions_at(extras.environment, clock, *extras.fields, p.development_s[i],
                                             t0_model + 0.5 * s.dt_s, x[0], x[1], depth);
        dev1 = develop(p, i, id, step, extras.environment, met, s.dt_s, age1, clock, rng);
        if (dev1 < 0) {
          ++died;
          continue;
        }
      }
    }
    const double survive = constant_hazard ? constant_survive : clock.step_survival(age0, age1);
    switch (end_step(p, i, id, step, survive, dev1, x[0], x[1], settle_p, clock, reefs, rng)) {
      case StepEnd::died: ++died; break;
      case StepEnd::settled: settled_now[i] = 1; ++settled; break;
      case StepEnd::drifting: break;
    }
  }

  return StepTally{particle_steps, land_contacts, released, settled, died, stranded, lost, max_speed};
}

// The core step: 2-D, constant Kh, no environment effects.
template <class Flow, class Lookup>
StepTally drift_step(ParticleSet& p, std::uint32_t step, const StepSettings& s,
                     const LarvalClock& clock, const EarthModel& earth, const Flow& flow,
                     const Lookup& reefs, const CounterRandom& rng,
                     std::vector<std::uint8_t>& settled_now) {
  return drift_step(p, step, s, clock, earth, flow, reefs, rng, settled_now, NoExtras{});
}

}  // namespace cullcast::drift
