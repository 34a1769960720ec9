#pragma once
// The end of a larva's step, once it has moved: mortality over the step
// (weight decay or a death draw), then settlement when competent and over a
// reef, then death past the end of competency. One rule for both step paths
// (drift_step.hpp and grid_stepper.hpp).
#include <cstdint>

#include "cullcast/base/random.hpp"
#include "cullcast/drift/larval_clock.hpp"
#include "cullcast/drift/particles.hpp"

namespace cullcast::drift {

enum class StepEnd : std::uint8_t { drifting, died, settled };

// `survive`: probability of surviving the step; `development_s`: the
// (development) age at the step's end; (lon, lat): where the larva ended it.
// Sets p.fate[i] (and p.reef[i] on settling) and says which end it met.
template <class Lookup>
inline StepEnd end_step(ParticleSet& p, std::int64_t i, const StreamId& id, std::uint32_t step, double survive,
                        double development_s, double lon, double lat, double settle_p, const LarvalClock& clock,
                        const Lookup& reefs, const CounterRandom& rng) noexcept {
  if (clock.random_deaths()) {
    if (survive < 1.0 && rng.uniform2(id, step, Draw::mortality)[0] >= survive) {
      p.fate[i] = Fate::died;
      return StepEnd::died;
    }
  } else {
    p.weight[i] *= survive;
  }
  if (clock.competent(development_s)) {
    const int reef = reefs.reef_at(lon, lat);
    if (reef >= 0 && (settle_p >= 1.0 || rng.uniform2(id, step, Draw::settlement)[0] < settle_p)) {
      p.fate[i] = Fate::settled;
      p.reef[i] = reef;
      return StepEnd::settled;
    }
  }
  if (development_s >= clock.max_age_s()) {
    p.fate[i] = Fate::died;
    return StepEnd::died;
  }
  p.fate[i] = Fate::drifting;
  return StepEnd::drifting;
}

}  // namespace cullcast::drift
