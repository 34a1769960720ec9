// Larval output against the published fecundity and fertilisation points.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>

#include "cullcast/cull/larval_output.hpp"

using namespace cullcast::cull;
using cullcast::study::CullSettings;

TEST_CASE("fecundity: the default female spawns within the published range") {
  const CullSettings s;
  // Babcock, Milton & Pratchett (2016), Mar. Biol. 163:234: an average female of
  // 39.2 cm spawns 29-38 million eggs per season.
  const double e = eggs_per_female(39.2, s);
  CHECK(e >= 29e6);
  CHECK(e <= 38e6);
  // Size scaling is an assumption (eggs ~ D^3): doubling the diameter gives 8x.
  CHECK(eggs_per_female(2 * 39.2, s) == Approx(8 * e).epsilon(1e-12));
  // No size data: the default diameter; size classes: count-weighted mean of class midpoints.
  CHECK(mean_eggs_per_female({}, s) == Approx(e));
  const double two_class = mean_eggs_per_female({{15, 25, 1}, {25, INFINITY, 3}}, s);
  CHECK(two_class == Approx((eggs_per_female(20, s) + 3 * eggs_per_female(30, s)) / 4));
}

TEST_CASE("fertilisation: the fit reproduces Babcock & Mundy (1992) and the defaults") {
  // Babcock & Mundy (1992), Aust. J. Mar. Freshw. Res. 43:525-533: 83 % at the
  // peak of spawning (taken at 0 m), 47 % at 32 m, 23 % beyond 60 m.
  const std::vector<double> d = {0, 32, 60}, f = {0.83, 0.47, 0.23};
  const FertilisationFit fit = fertilisation_fit(d, f);
  const CullSettings s;
  CHECK(fit.peak == Approx(s.fertilisation_peak).margin(0.005));   // defaults are this fit, rounded
  CHECK(fit.scale_m == Approx(s.fertilisation_scale_m).margin(0.05));
  for (std::size_t i = 0; i < d.size(); ++i) {
    // Within 4 percentage points of each published value (a two-parameter fit to three points).
    CHECK(fertilisation_at_distance(d[i], s.fertilisation_peak, s.fertilisation_scale_m) ==
          Approx(f[i]).margin(0.04));
  }
}

TEST_CASE("fertilisation at density: closed form equals the integral over nearest-neighbour distances") {
  const CullSettings s;
  // Clark & Evans (1954), Ecology 35:445-453: nearest-neighbour distance of a
  // Poisson process of density rho has density 2 pi rho r exp(-pi rho r^2), mean 1/(2 sqrt rho).
  for (double per_ha : {0.01, 1.0, 15.0, 100.0, 1000.0, 1e5}) {
    const double rho = per_ha / 1e4, a = std::numbers::pi * rho;
    const double r_max = 12.0 / std::sqrt(a);  // exp(-144): the tail is negligible
    const int n = 200000;
    const double h = r_max / n;
    double integral = 0, mean_r = 0;
    for (int k = 0; k <= n; ++k) {  // composite Simpson
      const double r = k * h, w = (k == 0 || k == n) ? 1 : (k % 2 ? 4 : 2);
      const double pdf = 2 * a * r * std::exp(-a * r * r);
      integral += w * pdf * s.fertilisation_peak * std::exp(-r / s.fertilisation_scale_m);
      mean_r += w * pdf * r;
    }
    integral *= h / 3;
    mean_r *= h / 3;
    CHECK(mean_r == Approx(1 / (2 * std::sqrt(rho))).epsilon(1e-6));
    CHECK(fertilisation_at_density(per_ha, s.fertilisation_peak, s.fertilisation_scale_m) ==
          Approx(integral).epsilon(1e-6));
  }
  // Allee effect: proportional to density when sparse, the peak when dense, 0 with nobody.
  const double f1 = fertilisation_at_density(1e-4, 0.86, 46.9), f2 = fertilisation_at_density(2e-4, 0.86, 46.9);
  CHECK(f2 / f1 == Approx(2).epsilon(1e-3));
  CHECK(fertilisation_at_density(1e8, 0.86, 46.9) == Approx(0.86).epsilon(1e-3));
  CHECK(fertilisation_at_density(0, 0.86, 46.9) == 0);
}

TEST_CASE("larvae released: adults x female share x eggs x fertilisation") {
  const CullSettings s;
  const double f = fertilisation_at_density(50, s.fertilisation_peak, s.fertilisation_scale_m);
  CHECK(larvae_released(1000, 50, 33.5e6, s) == Approx(1000 * 0.5 * 33.5e6 * f));
  CHECK(larvae_released(0, 50, 33.5e6, s) == 0);
}
