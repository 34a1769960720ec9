#pragma once
// Temperature- and food-dependent larval development.
//
// Temperature: Uthicke, Logan, Liddy, Francis, Hardy & Lamare (2015), Sci. Rep.
// 5:8402 — +2 °C shortened development of this starfish's larvae by about 30 %.
// Written as a Q10 law for the development rate r(T) = Q10^((T − T_ref)/10):
// a duration factor of 0.7 for +2 °C means r(T+2)/r(T) = 1/0.7, hence
// Q10 = (1/0.7)^(10/2) = 5.95 (derived here, not a published Q10). Development
// age advances by r(T)·dt; competency and the end of competency are reached
// at the same development ages as at T_ref (precompetent/competent days).
// T_ref = 28 °C is an assumption (no source): set it to the temperature at
// which the scenario's larval durations were observed.
//
// Food: Fabricius, Okaji & De'ath (2010), Coral Reefs 29:593–605 — the odds of
// completing development rise about 8-fold per doubling of chlorophyll up to
// about 3 µg/L. Written as logit p(c) = logit p_sat + ln(8)·log2(min(c, c_sat)/c_sat),
// slope ln 8 = 2.079 per log2(chl). p_sat (completion at saturating food,
// default 0.9) is an assumption (no source). The food a larva meets is the
// geometric mean of chlorophyll along its path before competency (the mean of
// log2 chl, which the relation is linear in); development is completed — or
// not — when the larva reaches competency.
#include <algorithm>
#include <cmath>

#include "cullcast/base/plain_math.hpp"
#include "cullcast/study/study.hpp"

namespace cullcast::drift {

class LarvalEnvironment {
 public:
  LarvalEnvironment(const study::LarvaeSettings& s, bool temperature_on, bool food_on)
      : temperature_on_(temperature_on),
        food_on_(food_on),
        t_ref_c_(s.reference_temperature_c),
        ln_q10_per_c_(std::log(s.development_q10) / 10.0),
        log2_sat_(std::log2(s.food_saturation_mg_m3)),
        slope_(std::log(s.food_odds_per_doubling)),
        logit_sat_(std::log(s.completion_at_saturation / (1 - s.completion_at_saturation))) {}

  bool temperature_on() const noexcept { return temperature_on_; }
  bool food_on() const noexcept { return food_on_; }
  bool any() const noexcept { return temperature_on_ || food_on_; }

  // Development-rate factor at temperature T (°C); 1 at T_ref and where T is unknown (NaN).
  double development_rate(double temperature_c) const noexcept {
    if (!temperature_on_ || std::isnan(temperature_c)) return 1.0;
    // Clamped far beyond any sea temperature: plain_exp's range is ±700.
    return plain_exp(std::clamp(ln_q10_per_c_ * (temperature_c - t_ref_c_), -600.0, 600.0));
  }
  // log2 of chlorophyll (mg m-3) for the path average; unknown (NaN) or
  // non-positive values count as saturating food (no penalty without data).
  double food_log2(double chl_mg_m3) const noexcept {
    if (!(chl_mg_m3 > 0)) return log2_sat_;
    // Below 1e-30 mg m-3 counts as 1e-30 (plain_log wants a normal number).
    return std::min(plain_log(std::max(chl_mg_m3, 1e-30)) * kLog2e, log2_sat_);
  }
  // Probability of completing development given the mean log2 chlorophyll met.
  double completion_from_log2(double mean_log2_chl) const noexcept {
    if (!food_on_) return 1.0;
    const double logit = logit_sat_ + slope_ * (std::min(mean_log2_chl, log2_sat_) - log2_sat_);
    return 1.0 / (1.0 + plain_exp(std::clamp(-logit, -600.0, 600.0)));
  }
  double completion_probability(double chl_mg_m3) const noexcept {
    return completion_from_log2(food_log2(chl_mg_m3));
  }

 private:
  static constexpr double kLog2e = 1.4426950408889634074;  // 1 / ln 2
  bool temperature_on_, food_on_;
  double t_ref_c_, ln_q10_per_c_, log2_sat_, slope_, logit_sat_;
};

}  // namespace cullcast::drift
