#pragma once
// Backward drift: where did larvae arriving on a sink reef come from?
// Particles released on the sink at the arrival time are moved backwards in
// time (negative step: the currents are sampled at earlier and earlier
// times; the scheme is the forward one with dt < 0, so backward then forward
// without diffusion returns to the start within the scheme's error). After a
// backward time τ the particle shows where a larva of age τ would have been
// spawned; τ in the competency window [precompetent, precompetent +
// competent] makes that reef a candidate source. Each step in the window adds
// survival S(τ)·|dt| to the reef under the particle: the origin density
// assumes spawning equally likely at any time (no spawning calendar).
//
// Caveat (docs/methods.md "Backward drift"): diffusion is not time-reversible.
// The backward run solves the adjoint of the forward advection–diffusion
// equation: advection by −u (and −w in 3-D), the same random walk — with
// varying Kh or Kv the drift-corrected (Visser 1997) walk keeps its +∇K
// correction, as the adjoint operator ∇·(K∇·) is self-adjoint. The result is
// a map of likely origins, not a column of the connectivity matrix.
//
// Optional physics (StepExtras): varying Kh, depth band and full 3-D as
// forwards. With temperature-dependent development each particle carries the
// development time accumulated on its backward path, and the competency
// window is tested on that (a larva spawned at backward time τ arrives with
// exactly that development). Not used backwards, because they depend on the
// unknown age along the path: the age-dependent depth table, and the food
// effect on completing development (docs/methods.md).
#include <cmath>
#include <cstdint>
#include <vector>

#include "cullcast/base/random.hpp"
#include "cullcast/drift/drift_step.hpp"

namespace cullcast::drift {

struct BackwardTally {
  std::vector<double> reef_weight;  // per reef: Σ S(τ)·|dt| over particles and steps, seconds
  std::uint64_t lost = 0;           // left the grid backwards
};

// One backward step of length dt_s (> 0) ending (in backward time) at
// t0_model − dt_s. Only `drifting` particles move; advection with the scheme
// at −dt, then a Gaussian walk of variance 2·Kh·dt; land holds the step.
template <class Flow, class Extras = NoExtras>
void backward_step(ParticleSet& p, std::uint32_t step, double t0_model_s, double dt_s, double kh_m2_s,
                   Scheme scheme, const EarthModel& earth, const Flow& flow, const CounterRandom& rng,
                   std::uint32_t event, BackwardTally& tally, const Extras& extras = Extras{}) {
  const double walk = std::sqrt(2.0 * kh_m2_s * dt_s);
  const std::int64_t n = static_cast<std::int64_t>(p.size());
  std::uint64_t lost = 0;
  // Serial below a few thousand particles, as in drift_step: a parallel
  // region per step costs more than it saves there, and far more when the
  // machine is busy (threads spin-wait for a core).
#pragma omp parallel for schedule(static) if (n > 4096) reduction(+ : lost)
  for (std::int64_t i = 0; i < n; ++i) {
    if (p.fate[i] != Fate::drifting) continue;
    const double depth = p.depth_m[i];
    const Vec2 start{p.lon[i], p.lat[i]};
    const EarthModel::Local metric = earth.near(start[1]);
    auto rate = [&](double t, const Vec2& x) noexcept -> Vec2 {
      const currents::FlowSample f = flow.sample(t, x[0], x[1], depth);
      double east, north;
      metric.degrees_per_metre(x[1], east, north);
      return {f.u_m_s * east, f.v_m_s * north};
    };
    Vec2 x = advance(scheme, rate, t0_model_s, start, -dt_s);
    const StreamId id{event, p.source[i], p.index[i]};
    bool walked = false;
    if constexpr (Extras::active) {
      if (extras.kh_varies()) {
        extras.walk_horizontal(flow, t0_model_s - dt_s, x, depth, metric, rng.walk_normal2(id, step),
                               dt_s);
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
    const auto where = flow.status(x[0], x[1]);
    if (where == currents::SampleStatus::outside) {
      p.fate[i] = Fate::lost;
      ++lost;
      continue;
    }
    if (where == currents::SampleStatus::land) x = start;
    p.lon[i] = x[0];
    p.lat[i] = x[1];
    if constexpr (Extras::active) {
      const double t_mid = t0_model_s - 0.5 * dt_s;
      if (extras.depth.moves()) {
        const double r = rng.normal2(id, step, Draw::vertical)[0];
        p.depth_m[i] = static_cast<float>(extras.move_vertically(flow, t_mid, dt_s, x, depth, 0.0, r, true));
      }
      if (extras.environment.temperature_on() && !p.development_s.empty()) {
        const double rate_now =
            extras.environment.development_rate(extras.fields->temperature_c(t_mid, x[0], x[1], depth));
        p.development_s[i] += static_cast<float>(rate_now * dt_s);
      }
    }
  }
  tally.lost += lost;
}

// Adds the origin weight of the particles after backward time elapsed_s of
// the run. A particle's own backward time is τ = elapsed_s − release_s (its
// arrival, counted backwards from the run's start: 0 when all arrive at once).
template <class Lookup>
void add_origins(const ParticleSet& p, double elapsed_s, double dt_s, const LarvalClock& clock,
                 const Lookup& reefs, BackwardTally& tally) {
  for (std::size_t i = 0; i < p.size(); ++i) {
    if (p.fate[i] != Fate::drifting) continue;
    const double tau_s = elapsed_s - p.release_s[i];
    // With temperature-dependent development: the development accumulated
    // on the backward path decides competency; survival stays in real age.
    const double development_s = p.development_s.empty() ? tau_s : p.development_s[i];
    if (!clock.competent(development_s)) continue;
    const int r = reefs.reef_at(p.lon[i], p.lat[i]);
    if (r >= 0 && static_cast<std::size_t>(r) < tally.reef_weight.size()) {
      tally.reef_weight[r] += clock.survival(tau_s) * dt_s * p.weight[i];
    }
  }
}

}  // namespace cullcast::drift
