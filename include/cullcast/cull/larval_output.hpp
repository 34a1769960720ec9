#pragma once
// CONTRACT. Larvae released by a group of adult starfish in one season:
//   L = adults x female_fraction x eggs_per_female(diameter) x F(density).
//
// Fecundity. Babcock, Milton & Pratchett (2016), Mar. Biol. 163:234: an
// average female of 39.2 cm spawns 29-38 million eggs per season. A published
// size-fecundity relation exists (Kettle & Lucas 1987, Bull. Mar. Sci.
// 41:541-551) but its coefficients were not available to us, so the size
// dependence is an ASSUMPTION: eggs = E_ref (D / D_ref)^b, b = 3 (eggs in
// proportion to body mass, i.e. to diameter cubed; constant gonad share of
// mass), scaled through the published average point (D_ref 39.2 cm, E_ref the
// midpoint 33.5 million).
//
// Fertilisation (the Allee effect). Babcock & Mundy (1992), Aust. J. Mar.
// Freshw. Res. 43:525-533, measured fertilisation of 83 % at the peak of
// spawning, 47 % for spawners 32 m apart and 23 % beyond 60 m. We fit
// f(d) = f0 exp(-d / lambda) to those three points (83 % taken at d = 0, 23 %
// at d = 60 m) by least squares on ln f: f0 = 0.860, lambda = 46.9 m
// (fertilisation_fit() recomputes it). Spawners are placed as a Poisson
// process of density rho (per m2), so the distance D to the nearest other
// spawner has density 2 pi rho r exp(-pi rho r^2) (Clark & Evans 1954,
// Ecology 35:445-453; mean 1 / (2 sqrt rho)), and
//   F(rho) = f0 E[exp(-D / lambda)] = f0 (1 - sqrt(pi) x erfcx(x)),
//   x = 1 / (2 lambda sqrt(pi rho)),  erfcx(x) = exp(x^2) erfc(x),
// which follows by integrating by parts. F -> f0 at high density, F ~ rho
// (proportional) at low density: culling lowers the output of the survivors too.
#include <vector>

#include "cullcast/study/study.hpp"

namespace cullcast::cull {

struct FertilisationFit {
  double peak = 0;     // f0, fertilisation at zero distance (0..1)
  double scale_m = 0;  // lambda, metres
};
// Least-squares fit of ln f = ln f0 - d / lambda through (distance_m, fraction) points.
FertilisationFit fertilisation_fit(const std::vector<double>& distance_m,
                                   const std::vector<double>& fraction);

// Fertilisation at a distance d (metres) between spawners: f0 exp(-d / lambda).
double fertilisation_at_distance(double distance_m, double peak, double scale_m);

// Fertilisation F(rho) of a spawner among others at density rho (adults per
// hectare), as above. 0 at zero density.
double fertilisation_at_density(double adults_per_ha, double peak, double scale_m);

// Eggs per female per season at diameter D (cm): E_ref (D / D_ref)^b.
double eggs_per_female(double diameter_cm, const study::CullSettings& s);

// Mean eggs per female over surveyed size classes: sum n_c E(mid_c) / sum n_c,
// mid_c the midpoint of [min_cm, max_cm) (open classes: min_cm + width / 2).
// No counts (or all zero): E(default_diameter_cm).
struct SizeCount {
  double min_cm = 0, max_cm = 0;  // class bounds, cm; max_cm = inf for an open class
  double count = 0;               // animals counted
};
double mean_eggs_per_female(const std::vector<SizeCount>& classes, const study::CullSettings& s);

// Larvae released in a season by `adults` spawning at density `adults_per_ha`,
// with mean fecundity `eggs` per female.
double larvae_released(double adults, double adults_per_ha, double eggs, const study::CullSettings& s);

}  // namespace cullcast::cull
