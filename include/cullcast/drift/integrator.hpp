#pragma once
// Explicit one-step schemes for dx/dt = f(t, x), chosen by name.
// Contract of advance(): given the state x at time t, returns the state at
// t + dt; it does not change t or dt, calls `rate` only at times in [t, t+dt]
// and never allocates. Euler is order 1, midpoint RK2 order 2, classical RK4
// order 4 (Butcher 2016, "Numerical Methods for Ordinary Differential
// Equations", 3rd ed., §23 and §32).
#include <array>
#include <string>
#include <string_view>

namespace cullcast::drift {

using Vec2 = std::array<double, 2>;

enum class Scheme { euler, rk2, rk4 };

Scheme scheme_from_name(std::string_view name);  // throws std::invalid_argument
std::string scheme_name(Scheme scheme);

template <class Rate>
inline Vec2 advance(Scheme scheme, const Rate& rate, double t, const Vec2& x, double dt) noexcept {
  switch (scheme) {
    case Scheme::euler: {
      const Vec2 k1 = rate(t, x);
      return {x[0] + dt * k1[0], x[1] + dt * k1[1]};
    }
    case Scheme::rk2: {
      const Vec2 k1 = rate(t, x);
      const Vec2 k2 = rate(t + 0.5 * dt, {x[0] + 0.5 * dt * k1[0], x[1] + 0.5 * dt * k1[1]});
      return {x[0] + dt * k2[0], x[1] + dt * k2[1]};
    }
    case Scheme::rk4:
    default: {
      const double h = 0.5 * dt;
      const Vec2 k1 = rate(t, x);
      const Vec2 k2 = rate(t + h, {x[0] + h * k1[0], x[1] + h * k1[1]});
      const Vec2 k3 = rate(t + h, {x[0] + h * k2[0], x[1] + h * k2[1]});
      const Vec2 k4 = rate(t + dt, {x[0] + dt * k3[0], x[1] + dt * k3[1]});
      const double w = dt / 6.0;
      return {x[0] + w * (k1[0] + 2 * k2[0] + 2 * k3[0] + k4[0]),
              x[1] + w * (k1[1] + 2 * k2[1] + 2 * k3[1] + k4[1])};
    }
  }
}

}  // namespace cullcast::drift
