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

namespace {

// Fields for StepExtras in the backward tests: a sea floor far below, a
// uniform temperature.
struct StillFields {
  double temperature = 28.0;
  double kh(double, double, double) const noexcept { return std::nan(""); }
  double kv(double, double, double) const noexcept { return std::nan(""); }
  double sea_floor_m(double, double) const noexcept { return 1000.0; }
  double temperature_c(double, double, double, double) const noexcept { return temperature; }
  double chlorophyll_mg_m3(double, double, double, double) const noexcept { return 1.0; }
};

// A flow with vertical velocity: solid-body rotation horizontally, w upward.
struct RisingFlow {
  double w_m_s = 2e-4;
  currents::SampleStatus status(double, double) const noexcept { return currents::SampleStatus::water; }
  currents::FlowSample sample(double, double lon, double lat, double) const noexcept {
    const double m_per_deg = 6371000.0 * 3.14159265358979323846 / 180;
    const double x = (lon - 150.0) * m_per_deg, y = (lat + 20.0) * m_per_deg;
    const double omega = 2 * 3.14159265358979323846 / (2 * 86400.0);  // one turn in 2 days
    return {-omega * y, omega * x, w_m_s, currents::SampleStatus::water};
  }
};

}  // namespace

TEST_CASE("3-D backward then forward drift without diffusion returns to the start depth and position") {
  // Analytic: with constant w and Kv = 0 the depth changes by -w·dt forwards
  // and +w·dt backwards, exactly; horizontally RK4's round trip closes to its
  // local errors (as in the double-gyre case above).
  const RisingFlow flow;
  const StillFields fields;
  study::MotionSettings m;
  m.depth = "3d";
  StepExtras<StillFields> extras;
  extras.fields = &fields;
  extras.depth = DepthRule(m);
  extras.kv_m2_s = 0.0;
  const auto earth = EarthModel::sphere(6371000.0);
  const CounterRandom rng(9);
  study::LarvaeSettings l;
  l.precompetent_days = 30;
  l.competent_days = 30;
  l.mortality_per_day = 0;
  const LarvalClock clock(l);
  const test::BoxReef none{{0, -1, 0, -1}, 0};
  ParticleSet p;
  p.resize(4);
  for (std::size_t i = 0; i < 4; ++i) {
    p.lon[i] = 150.05 + 0.02 * static_cast<double>(i);
    p.lat[i] = -20.03;
    p.depth_m[i] = 20.0f;
    p.index[i] = static_cast<std::uint32_t>(i);
  }
  const ParticleSet start = p;
  StepSettings s;
  s.dt_s = 900;
  s.kh_m2_s = 0;
  std::vector<std::uint8_t> now;
  const int steps = 48;  // 12 hours: 8.64 m up at 2e-4 m/s
  for (int k = 0; k < steps; ++k) drift_step(p, k, s, clock, earth, flow, none, rng, now, extras);
  CHECK(p.depth_m[0] == Approx(20.0 - 2e-4 * 900 * steps).margin(1e-3));
  for (auto& f : p.fate) REQUIRE(f == Fate::drifting);
  BackwardTally tally;
  for (int k = 0; k < steps; ++k) {
    backward_step(p, k, steps * s.dt_s - k * s.dt_s, s.dt_s, 0.0, Scheme::rk4, earth, flow, rng, 0, tally, extras);
  }
  const double m_per_deg = 6371000.0 * 3.14159265358979323846 / 180;
  for (std::size_t i = 0; i < 4; ++i) {
    CHECK(p.depth_m[i] == Approx(20.0).margin(1e-3));  // float storage
    CHECK(std::hypot(p.lon[i] - start.lon[i], p.lat[i] - start.lat[i]) * m_per_deg < 1.0);
  }
}

TEST_CASE("backward origins with temperature-dependent development use the development time") {
  // Development rate Q10^((T - T_ref)/10) (docs/methods.md, temperature): at
  // T = T_ref + 10 °C with Q10 = 2 larvae develop twice as fast, so a larva
  // spawned 1 day before arrival has 2 days of development: competent for a
  // 2-day pre-competency period although its real age is 1 day; 2 days back
  // it reaches the end of competency (4 days of development).
  study::LarvaeSettings l;
  l.precompetent_days = 2;
  l.competent_days = 2;
  l.mortality_per_day = 0.0;
  l.reference_temperature_c = 28.0;
  l.development_q10 = 2.0;
  const LarvalClock clock(l);
  StillFields fields;
  fields.temperature = 38.0;
  StepExtras<StillFields> extras;
  extras.fields = &fields;
  extras.environment = LarvalEnvironment(l, true, false);
  const auto still = test::make_flow([](double, double, double) { return std::array<double, 2>{0.0, 0.0}; });
  const auto earth = EarthModel::sphere(6371000.0);
  const CounterRandom rng(1);
  const test::BoxReef everywhere{{-1e9, 1e9, -90, 90}, 0};
  ParticleSet p;
  p.resize(1);
  p.fate[0] = Fate::drifting;
  p.enable_development();
  BackwardTally tally;
  tally.reef_weight.assign(1, 0.0);
  const double dt = 3600;
  std::vector<double> credited_at;  // backward hours at which origins were credited
  for (int k = 0; k < 72; ++k) {
    const double before = tally.reef_weight[0];
    backward_step(p, k, 1e6 - k * dt, dt, 0.0, Scheme::rk4, earth, still, rng, 0, tally, extras);
    add_origins(p, (k + 1) * dt, dt, clock, everywhere, tally);
    if (tally.reef_weight[0] > before) credited_at.push_back((k + 1) * dt / 3600);
  }
  REQUIRE(!credited_at.empty());
  CHECK(credited_at.front() == Approx(24.0));  // 1 day back = 2 days of development
  CHECK(credited_at.back() == Approx(48.0));   // 2 days back = 4 days: end of competency
}
