// Integrators against analytic solutions and an independent adaptive solver.
#include <catch2/catch.hpp>

#include <boost/numeric/odeint.hpp>
#include <cmath>

#include "cullcast/drift/integrator.hpp"

using cullcast::drift::advance;
using cullcast::drift::Scheme;
using cullcast::drift::Vec2;

namespace {

constexpr double kPi = 3.14159265358979323846;

// Solid-body rotation about the origin: u = −Ω y, v = Ω x.
struct Rotation {
  double omega;
  Vec2 operator()(double, const Vec2& x) const { return {-omega * x[1], omega * x[0]}; }
};

Vec2 integrate(Scheme s, const Rotation& f, Vec2 x, double dt, int steps) {
  for (int k = 0; k < steps; ++k) x = advance(s, f, k * dt, x, dt);
  return x;
}

double error_after_period(Scheme s, int steps) {
  const Rotation f{2 * kPi / 100.0};
  const Vec2 end = integrate(s, f, {1.0, 0.0}, 100.0 / steps, steps);
  return std::hypot(end[0] - 1.0, end[1]);
}

// Time-dependent double gyre: Shadden, Lekien & Marsden (2005), Physica D
// 212:271–304, eq. 13–14, with A = 0.1, ε = 0.25, ω = 2π/10.
struct DoubleGyre {
  double A = 0.1, eps = 0.25, omega = 2 * kPi / 10;
  Vec2 operator()(double t, const Vec2& x) const {
    const double a = eps * std::sin(omega * t), b = 1 - 2 * a;
    const double f = a * x[0] * x[0] + b * x[0], dfdx = 2 * a * x[0] + b;
    return {-kPi * A * std::sin(kPi * f) * std::cos(kPi * x[1]),
            kPi * A * std::cos(kPi * f) * std::sin(kPi * x[1]) * dfdx};
  }
};

}  // namespace

TEST_CASE("uniform flow moves exactly U·t with every scheme") {
  auto f = [](double, const Vec2&) { return Vec2{0.3, -0.2}; };
  for (Scheme s : {Scheme::euler, Scheme::rk2, Scheme::rk4}) {
    Vec2 x{1, 2};
    for (int k = 0; k < 100; ++k) x = advance(s, f, k * 0.5, x, 0.5);
    CHECK(x[0] == Approx(1 + 0.3 * 50).epsilon(1e-14));
    CHECK(x[1] == Approx(2 - 0.2 * 50).epsilon(1e-14));
  }
}

TEST_CASE("RK4 is exact for velocities polynomial in time up to degree 3") {
  // x' = 1 + t + t² + t³ → x = t + t²/2 + t³/3 + t⁴/4 (derived, REFERENCES §1 [D]).
  auto f = [](double t, const Vec2&) { return Vec2{1 + t + t * t + t * t * t, 0}; };
  Vec2 x{0, 0};
  const double dt = 0.25;
  for (int k = 0; k < 8; ++k) x = advance(Scheme::rk4, f, k * dt, x, dt);
  CHECK(x[0] == Approx(2 + 2 + 8.0 / 3 + 4).epsilon(1e-14));
}

TEST_CASE("tidal flow U cos ωt gives (U/ω) sin ωt and no net drift per period") {
  const double U = 0.5, w = 2 * kPi / (12.42 * 3600);
  auto f = [&](double t, const Vec2&) { return Vec2{U * std::cos(w * t), 0}; };
  Vec2 x{0, 0};
  const double dt = 600;
  const int steps = static_cast<int>(std::round(12.42 * 3600 / dt));  // 74.52 → not exact
  for (int k = 0; k < steps; ++k) x = advance(Scheme::rk4, f, k * dt, x, dt);
  CHECK(x[0] == Approx(U / w * std::sin(w * steps * dt)).margin(1e-6));
}

TEST_CASE("RK4 solid-body rotation: radius factor |R|^N after one period") {
  // One RK4 step scales the radius by |R| = sqrt(1 − θ⁶/72 + θ⁸/576), θ = ΩΔt
  // (stability function of classical RK4, derived; REFERENCES §1 [D]).
  for (int n : {20, 100}) {
    const double theta = 2 * kPi / n;
    const double factor = std::sqrt(1 - std::pow(theta, 6) / 72 + std::pow(theta, 8) / 576);
    const Vec2 end = integrate(Scheme::rk4, Rotation{2 * kPi / 100.0}, {1.0, 0.0}, 100.0 / n, n);
    CHECK(std::hypot(end[0], end[1]) == Approx(std::pow(factor, n)).epsilon(1e-12));
  }
  const Vec2 end20 = integrate(Scheme::rk4, Rotation{2 * kPi / 100.0}, {1.0, 0.0}, 5.0, 20);
  CHECK(std::hypot(end20[0], end20[1]) == Approx(0.999868128863680).epsilon(1e-12));
  CHECK(std::atan2(end20[1], end20[0]) == Approx(-4.92e-4).margin(0.01e-4));
}

TEST_CASE("convergence orders: Euler 1, RK2 2, RK4 4") {
  // Halving Δt divides the error by 2^p (standard result for a p-th order
  // one-step method; Butcher 2016, §23).
  const struct {
    Scheme s;
    double order;
    int steps;
  } cases[] = {{Scheme::euler, 1, 4000}, {Scheme::rk2, 2, 400}, {Scheme::rk4, 4, 100}};
  for (const auto& c : cases) {
    const double e1 = error_after_period(c.s, c.steps);
    const double e2 = error_after_period(c.s, 2 * c.steps);
    CHECK(std::log2(e1 / e2) == Approx(c.order).margin(0.1));
  }
}

TEST_CASE("double gyre trajectories match Boost.Odeint Dormand–Prince") {
  // Independent reference: Boost.Odeint runge_kutta_dopri5, tolerance 1e-12.
  using State = std::array<double, 2>;
  const DoubleGyre gyre;
  for (const Vec2 start : {Vec2{0.3, 0.4}, Vec2{1.2, 0.7}, Vec2{1.6, 0.2}}) {
    State ref{start[0], start[1]};
    auto system = [&](const State& x, State& dxdt, double t) { dxdt = gyre(t, {x[0], x[1]}); };
    boost::numeric::odeint::integrate_adaptive(
        boost::numeric::odeint::make_controlled<boost::numeric::odeint::runge_kutta_dopri5<State>>(
            1e-12, 1e-12),
        system, ref, 0.0, 10.0, 0.001);
    Vec2 x = start;
    const double dt = 0.01;
    for (int k = 0; k < 1000; ++k) x = advance(Scheme::rk4, gyre, k * dt, x, dt);
    CHECK(x[0] == Approx(ref[0]).margin(1e-7));
    CHECK(x[1] == Approx(ref[1]).margin(1e-7));
  }
}
