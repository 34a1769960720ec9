// Larval output: fecundity after Babcock, Milton & Pratchett (2016), Mar. Biol.
// 163:234 (size scaling an assumption); fertilisation fitted to Babcock & Mundy
// (1992), Aust. J. Mar. Freshw. Res. 43:525-533; nearest-neighbour distances of
// a Poisson process after Clark & Evans (1954), Ecology 35:445-453.
#include "cullcast/cull/larval_output.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>

namespace cullcast::cull {

FertilisationFit fertilisation_fit(const std::vector<double>& d, const std::vector<double>& f) {
  if (d.size() != f.size() || d.size() < 2) throw std::invalid_argument("fertilisation_fit: need >= 2 points");
  const double n = static_cast<double>(d.size());
  double sx = 0, sy = 0;
  for (std::size_t i = 0; i < d.size(); ++i) {
    sx += d[i];
    sy += std::log(f[i]);
  }
  const double mx = sx / n, my = sy / n;
  double sxx = 0, sxy = 0;
  for (std::size_t i = 0; i < d.size(); ++i) {
    sxx += (d[i] - mx) * (d[i] - mx);
    sxy += (d[i] - mx) * (std::log(f[i]) - my);
  }
  const double slope = sxy / sxx;
  return {std::exp(my - slope * mx), -1.0 / slope};
}

double fertilisation_at_distance(double distance_m, double peak, double scale_m) {
  return peak * std::exp(-distance_m / scale_m);
}

double fertilisation_at_density(double adults_per_ha, double peak, double scale_m) {
  if (!(adults_per_ha > 0)) return 0.0;
  const double rho = adults_per_ha / 1e4;  // per m2
  const double x = 1.0 / (2.0 * scale_m * std::sqrt(std::numbers::pi * rho));
  double mean_kernel;
  if (x > 20.0) {
    // Asymptotic series of 1 - sqrt(pi) x erfcx(x) (Abramowitz & Stegun 7.1.23),
    // next term below 3e-9 relative; exp(x^2) overflows near x = 26:
    // 1/(2x^2) - 3/(4x^4) + 15/(8x^6) - 105/(16x^8); the direct form loses digits here.
    const double u = 1.0 / (x * x);
    mean_kernel = u * (0.5 - u * (0.75 - u * (1.875 - u * 6.5625)));
  } else {
    mean_kernel = 1.0 - std::sqrt(std::numbers::pi) * x * std::exp(x * x) * std::erfc(x);
  }
  return peak * mean_kernel;
}

double eggs_per_female(double diameter_cm, const study::CullSettings& s) {
  if (!(diameter_cm > 0)) return 0.0;
  return s.eggs_per_female * std::pow(diameter_cm / s.reference_diameter_cm, s.fecundity_exponent);
}

double mean_eggs_per_female(const std::vector<SizeCount>& classes, const study::CullSettings& s) {
  double n = 0, e = 0;
  for (const auto& c : classes) {
    if (!(c.count > 0)) continue;
    const double mid = std::isfinite(c.max_cm) ? 0.5 * (c.min_cm + c.max_cm) : c.min_cm + 0.5 * s.open_class_width_cm;
    n += c.count;
    e += c.count * eggs_per_female(mid, s);
  }
  return n > 0 ? e / n : eggs_per_female(s.default_diameter_cm, s);
}

double larvae_released(double adults, double adults_per_ha, double eggs, const study::CullSettings& s) {
  if (!(adults > 0)) return 0.0;
  return adults * s.female_fraction * eggs *
         fertilisation_at_density(adults_per_ha, s.fertilisation_peak, s.fertilisation_scale_m);
}

}  // namespace cullcast::cull
