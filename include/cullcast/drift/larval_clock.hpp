#pragma once
// Larval biology as functions of age: competency window, survival, settlement.
// Survival S(a) = exp(-H(a)) with cumulative hazard H:
//   constant hazard m:       H(a) = m·a
//   Weibull, shape k, scale λ: H(a) = (a/λ)^k, hazard h(a) = (k/λ)(a/λ)^(k−1)
//   (the age-dependent form used for larval mortality by Connolly & Baird 2010,
//   Ecology 91:3572–3583 — parameterisation here is the standard Weibull one;
//   their exact notation is from memory).
// Over a step from age a0 to a1 a larva survives with probability
// S(a1)/S(a0) = exp(−(H(a1) − H(a0))): used as a weight factor (mortality_as =
// "weight") or as the chance of a death draw ("random"); both have the same
// expectation.
#include <cmath>
#include <limits>

#include "cullcast/study/study.hpp"

namespace cullcast::drift {

class LarvalClock {
 public:
  explicit LarvalClock(const study::LarvaeSettings& s)
      : precompetent_s_(s.precompetent_days * kDay),
        max_age_s_((s.precompetent_days + s.competent_days) * kDay),
        weibull_(s.mortality == "weibull"),
        rate_per_s_(s.mortality_per_day / kDay),
        shape_(s.weibull_shape),
        scale_s_(s.weibull_scale_days * kDay),
        settle_rate_per_s_(s.settle_rate_per_day / kDay),
        random_deaths_(s.mortality_as == "random") {}

  double precompetent_s() const noexcept { return precompetent_s_; }
  double max_age_s() const noexcept { return max_age_s_; }
  bool random_deaths() const noexcept { return random_deaths_; }

  // A larva may settle at age a (seconds) when precompetent <= a <= max age.
  bool competent(double age_s) const noexcept {
    return age_s >= precompetent_s_ && age_s <= max_age_s_;
  }

  double cumulative_hazard(double age_s) const noexcept {
    if (age_s <= 0) return 0;
    if (weibull_) return std::pow(age_s / scale_s_, shape_);
    return rate_per_s_ * age_s;
  }
  double survival(double age_s) const noexcept { return std::exp(-cumulative_hazard(age_s)); }
  // Probability of surviving from age a0 to a1.
  double step_survival(double a0_s, double a1_s) const noexcept {
    return std::exp(-(cumulative_hazard(a1_s) - cumulative_hazard(a0_s)));
  }
  // True when the survival over a step depends only on its length (constant hazard).
  bool constant_hazard() const noexcept { return !weibull_; }
  // Probability that a competent larva over a reef settles during a step of dt.
  double settle_probability(double dt_s) const noexcept {
    if (std::isinf(settle_rate_per_s_)) return 1.0;
    return 1.0 - std::exp(-settle_rate_per_s_ * dt_s);
  }

 private:
  static constexpr double kDay = 86400.0;
  double precompetent_s_, max_age_s_;
  bool weibull_;
  double rate_per_s_, shape_, scale_s_;
  double settle_rate_per_s_;
  bool random_deaths_;
};

}  // namespace cullcast::drift
