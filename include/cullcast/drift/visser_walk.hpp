#pragma once
// Random walk in a spatially varying diffusivity K(z).
//
// Visser, A. W. (1997). Using random walk models to simulate the vertical
// distribution of particles in a turbulent water column. Mar. Ecol. Prog. Ser.
// 158:275–281. The drift-corrected step is
//   z' = z + K'(z)·Δt + R·sqrt(2·K(z + ½·K'(z)·Δt)·Δt / r)
// with R of mean 0 and variance r (here R ~ N(0,1), r = 1). Without the K'
// term (the "naive" step z' = z + R·sqrt(2·K(z)·Δt)) particles pile up where
// K is low — the naive step exists only so tests can show that failure.
// Visser's step criterion is Δt ≪ 1/max|K''|.
//
// The same step is used per horizontal axis (metres) for a varying Kh, and in
// depth (metres, positive down: the formula does not care about the sign
// convention as long as K' is taken along the same axis).
#include <cmath>

namespace cullcast::drift {

// K and dK/dz at one point (m2 s-1 and m s-1).
struct DiffusivityPoint {
  double k = 0;
  double dk = 0;
};

// Mirror z into [low, high] (repeatedly, for steps longer than the layer).
// A layer of zero thickness pins z to it.
inline double reflect_into(double z, double low, double high) noexcept {
  const double h = high - low;
  if (!(h > 0)) return low;
  if (z >= low && z <= high) return z;
  double y = std::fmod(z - low, 2 * h);
  if (y < 0) y += 2 * h;
  return low + (y <= h ? y : 2 * h - y);
}

// One drift-corrected step of length dt_s (seconds, > 0) with standard normal
// draw r. `k_at(z)` returns DiffusivityPoint at z. K is clamped at 0 so a
// field with small negative values (interpolation) cannot give a NaN.
template <class KAt>
inline double visser_step(double z, double dt_s, double r, const KAt& k_at) noexcept {
  const DiffusivityPoint here = k_at(z);
  const double zm = z + 0.5 * here.dk * dt_s;
  const double km = std::fmax(k_at(zm).k, 0.0);
  return z + here.dk * dt_s + r * std::sqrt(2.0 * km * dt_s);
}

// The uncorrected step, for tests only (it does not conserve a well-mixed state).
template <class KAt>
inline double naive_step(double z, double dt_s, double r, const KAt& k_at) noexcept {
  return z + r * std::sqrt(2.0 * std::fmax(k_at(z).k, 0.0) * dt_s);
}

// Central-difference K' for a K given only as values, with spacing h (metres).
template <class KValue>
inline DiffusivityPoint with_gradient(double z, double h, const KValue& k_value) noexcept {
  const double kp = k_value(z + h), km = k_value(z - h);
  return {k_value(z), (kp - km) / (2 * h)};
}

}  // namespace cullcast::drift
