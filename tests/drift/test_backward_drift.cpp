// Backward drift: backward then forward without diffusion returns particles
// to their start (RK4 error only), and origins are credited inside the
// competency window only.
#include <catch2/catch.hpp>

#include <cmath>

#include "analytic_flow.hpp"
#include "cullcast/drift/backward_drift.hpp"

using namespace cullcast;
using namespace cullcast::drift;

TEST_CASE("backward then forward drift without diffusion returns to the start") {
  // Time-dependent double gyre, Shadden, Lekien & Marsden (2005), Physica D
  // 212:271–304 (A = 0.1, ε = 0.25, ω = 2π/10), scaled so that one unit is
  // 1 degree and one time unit 1 day, velocities in m/s on the sphere. RK4
  // backward then forward differs from the start by the scheme's local errors
  // only: the round trip must close to far below one metre.
  const double pi = 3.14159265358979323846, day = 86400.0;
  const double m_per_deg = 6371000.0 * pi / 180;
  const double A = 0.1, eps = 0.25, omega = 2 * pi / 10;
  auto gyre = [&](double t_s, double lon, double lat) {
    const double t = t_s / day, x = lon - 150.0, y = lat;
    const double a = eps * std::sin(omega * t), b = 1 - 2 * a;
    const double f = a * x * x + b * x, dfdx = 2 * a * x + b;
    const double u = -pi * A * std::sin(pi * f) * std::cos(pi * y);
    const double v = pi * A * std::cos(pi * f) * std::sin(pi * y) * dfdx;
    return std::array<double, 2>{u * m_per_deg / day, v * m_per_deg / day};
  };
  const auto flow = test::make_flow(gyre);
  const auto earth = EarthModel::sphere(6371000.0);
  const CounterRandom rng(5);
  ParticleSet p;
  p.resize(9);
  for (std::size_t i = 0; i < 9; ++i) {
    p.lon[i] = 150.2 + 0.2 * (i % 3) * 2;
    p.lat[i] = 0.25 + 0.2 * static_cast<double>(i / 3);
    p.fate[i] = Fate::drifting;
    p.index[i] = static_cast<std::uint32_t>(i);
  }
  const ParticleSet start = p;
  const double dt = 1800, t_end = 20 * day;
  const int steps = 240;  // 5 days back
  BackwardTally tally;
  for (int k = 0; k < steps; ++k) {
    backward_step(p, k, t_end - k * dt, dt, 0.0, Scheme::rk4, earth, flow, rng, 0, tally);
  }
  double moved = 0;
  for (std::size_t i = 0; i < 9; ++i) moved = std::fmax(moved, std::fabs(p.lon[i] - start.lon[i]));
  CHECK(moved > 0.05);  // the particles really went somewhere
  // Forward with the same scheme from t_end − 5 days.
  for (int k = 0; k < steps; ++k) {
    const double t0 = t_end - steps * dt + k * dt;
    for (std::size_t i = 0; i < 9; ++i) {
      const auto metric = earth.near(p.lat[i]);
      auto rate = [&](double t, const Vec2& x) {
        const auto f = flow.sample(t, x[0], x[1], 0.0);
        double e, n;
        metric.degrees_per_metre(x[1], e, n);
        return Vec2{f.u_m_s * e, f.v_m_s * n};
      };
      const Vec2 x = advance(Scheme::rk4, rate, t0, {p.lon[i], p.lat[i]}, dt);
      p.lon[i] = x[0];
      p.lat[i] = x[1];
    }
  }
  for (std::size_t i = 0; i < 9; ++i) {
    const double error_m = std::hypot(p.lon[i] - start.lon[i], p.lat[i] - start.lat[i]) * m_per_deg;
    CHECK(error_m < 1.0);
  }
  CHECK(tally.lost == 0);
}

TEST_CASE("backward origins are credited inside the competency window only") {
  study::LarvaeSettings l;
  l.precompetent_days = 2;
  l.competent_days = 3;
  l.mortality_per_day = 0.1;
  const LarvalClock clock(l);
  ParticleSet p;
  p.resize(4);
  for (auto& f : p.fate) f = Fate::drifting;
  const test::BoxReef everywhere{{-1e9, 1e9, -90, 90}, 1};
  BackwardTally tally;
  tally.reef_weight.assign(2, 0.0);
  add_origins(p, 1.0 * 86400, 3600, clock, everywhere, tally);
  CHECK(tally.reef_weight[1] == 0.0);  // too young to have settled
  add_origins(p, 3.0 * 86400, 3600, clock, everywhere, tally);
  CHECK(tally.reef_weight[1] == Approx(4 * 3600 * std::exp(-0.3)));  // S(3 d) = e^{-0.1·3}
  add_origins(p, 6.0 * 86400, 3600, clock, everywhere, tally);
  CHECK(tally.reef_weight[1] == Approx(4 * 3600 * std::exp(-0.3)));  // past competency
}
