// The drift step on analytic flows: geometry on the sphere, diffusion
// statistics, mortality, the competency window, boundaries, conservation and
// thread-count independence.
#include <catch2/catch.hpp>

#include <omp.h>

#include <cmath>
#include <vector>

#include "analytic_flow.hpp"
#include "cullcast/drift/drift_step.hpp"

using namespace cullcast;
using namespace cullcast::drift;
using cullcast::test::BoxReef;
using cullcast::test::LonLatBox;
using cullcast::test::make_flow;

namespace {

constexpr double kPi = 3.14159265358979323846;
constexpr double kDay = 86400.0;

study::LarvaeSettings larvae(double pre_days, double comp_days, double mortality_per_day) {
  study::LarvaeSettings l;
  l.precompetent_days = pre_days;
  l.competent_days = comp_days;
  l.mortality_per_day = mortality_per_day;
  return l;
}

ParticleSet particles_at(std::size_t n, double lon, double lat) {
  ParticleSet p;
  p.resize(n);
  for (std::size_t i = 0; i < n; ++i) {
    p.lon[i] = lon;
    p.lat[i] = lat;
    p.index[i] = static_cast<std::uint32_t>(i);
  }
  return p;
}

struct Run {
  std::vector<StepTally> tallies;
  std::vector<std::pair<std::size_t, std::uint32_t>> settled;  // (particle, step)
};

template <class Flow, class Lookup>
Run run_steps(ParticleSet& p, int steps, const StepSettings& s, const LarvalClock& clock,
              const EarthModel& earth, const Flow& flow, const Lookup& reefs, std::uint64_t seed = 1) {
  const CounterRandom rng(seed);
  std::vector<std::uint8_t> now;
  Run run;
  for (int k = 0; k < steps; ++k) {
    run.tallies.push_back(drift_step(p, k, s, clock, earth, flow, reefs, rng, now));
    for (std::size_t i = 0; i < now.size(); ++i) {
      if (now[i]) run.settled.push_back({i, static_cast<std::uint32_t>(k)});
    }
  }
  return run;
}

const BoxReef kNoReef{{0, -1, 0, -1}, 0};

}  // namespace

TEST_CASE("Williamson test case 1: solid-body rotation on the sphere returns in 12 days") {
  // Williamson, Drake, Hack, Jakob & Swarztrauber (1992), J. Comput. Phys.
  // 102:211–224, test case 1: u = u0(cos θ cos α + sin θ cos λ sin α),
  // v = −u0 sin λ sin α, u0 = 2πa/12 days, a = 6.37122e6 m.
  const double a = 6.37122e6, u0 = 2 * kPi * a / (12 * kDay);
  for (double alpha : {0.0, kPi / 4, kPi / 2 - 0.05}) {
    auto v = [&](double, double lon, double lat) {
      const double l = lon * kPi / 180, th = lat * kPi / 180;
      return std::array<double, 2>{
          u0 * (std::cos(th) * std::cos(alpha) + std::sin(th) * std::cos(l) * std::sin(alpha)),
          -u0 * std::sin(l) * std::sin(alpha)};
    };
    const auto flow = make_flow(v);
    ParticleSet p = particles_at(1, 20.0, -10.0);
    StepSettings s;
    s.dt_s = 1200;
    const LarvalClock clock(larvae(100, 100, 0));
    run_steps(p, static_cast<int>(12 * kDay / s.dt_s), s, clock, EarthModel::sphere(a), flow,
              kNoReef);
    CHECK(p.fate[0] == Fate::drifting);
    CHECK(std::remainder(p.lon[0] - 20.0, 360.0) == Approx(0.0).margin(1e-6));
    CHECK(p.lat[0] == Approx(-10.0).margin(1e-6));
  }
}

TEST_CASE("uniform eastward flow: longitude advances by U·t/(R cos φ) exactly") {
  const double R = 6371000.0, U = 0.4;
  auto v = [&](double, double, double) { return std::array<double, 2>{U, 0.0}; };
  ParticleSet p = particles_at(1, 150.0, -20.0);
  StepSettings s;
  s.dt_s = 600;
  run_steps(p, 144, s, LarvalClock(larvae(100, 100, 0)), EarthModel::sphere(R), make_flow(v),
            kNoReef);
  const double expected = 150.0 + U * kDay / (R * std::cos(-20.0 * kPi / 180) * kPi / 180);
  CHECK(p.lon[0] == Approx(expected).epsilon(1e-13));
  CHECK(p.lat[0] == -20.0);
}

TEST_CASE("random walk: per-axis variance grows as 2·Kh·t") {
  // Einstein (1905), Ann. Phys. 17:549–560: ⟨x²⟩ = 2Kt per axis; sample
  // variance has standard error 2Kt·sqrt(2/(N−1)) for Gaussian positions.
  const double K = 10.0, R = 6371000.0;
  const std::size_t n = 20000;
  auto still = [](double, double, double) { return std::array<double, 2>{0.0, 0.0}; };
  ParticleSet p = particles_at(n, 150.0, 0.0);
  StepSettings s;
  s.dt_s = 600;
  s.kh_m2_s = K;
  const auto earth = EarthModel::sphere(R);
  run_steps(p, 144, s, LarvalClock(larvae(100, 100, 0)), earth, make_flow(still), kNoReef, 99);
  double sx = 0, sy = 0, sxx = 0, syy = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const double x = (p.lon[i] - 150.0) * earth.metres_per_degree_lon(0.0);
    const double y = p.lat[i] * earth.metres_per_degree_lat(0.0);
    sx += x, sy += y, sxx += x * x, syy += y * y;
  }
  const double vx = (sxx - sx * sx / n) / (n - 1), vy = (syy - sy * sy / n) / (n - 1);
  const double expected = 2 * K * kDay, se = expected * std::sqrt(2.0 / (n - 1));
  CHECK(std::fabs(vx - expected) < 4 * se);
  CHECK(std::fabs(vy - expected) < 4 * se);
  CHECK(std::fabs(sx / n) < 4 * std::sqrt(expected / n));
}

TEST_CASE("constant mortality: weights decay as exp(−m·t), random deaths follow it binomially") {
  auto still = [](double, double, double) { return std::array<double, 2>{0.0, 0.0}; };
  StepSettings s;
  s.dt_s = 3600;
  const auto earth = EarthModel::sphere(6371000.0);
  study::LarvaeSettings l = larvae(30, 30, 0.2);
  {
    ParticleSet p = particles_at(10, 150.0, -20.0);
    run_steps(p, 240, s, LarvalClock(l), earth, make_flow(still), kNoReef);
    for (double w : p.weight) CHECK(w == Approx(std::exp(-0.2 * 10)).epsilon(1e-12));
  }
  l.mortality_as = "random";
  const std::size_t n = 20000;
  ParticleSet p = particles_at(n, 150.0, -20.0);
  run_steps(p, 240, s, LarvalClock(l), earth, make_flow(still), kNoReef, 5);
  std::size_t alive = 0;
  for (Fate f : p.fate) alive += f == Fate::drifting;
  const double expected = std::exp(-2.0), sd = std::sqrt(expected * (1 - expected) / n);
  CHECK(std::fabs(static_cast<double>(alive) / n - expected) < 4 * sd);
  for (double w : p.weight) CHECK(w == 1.0);
}

TEST_CASE("Weibull mortality follows its closed-form survival exp(−(t/λ)^k)") {
  auto still = [](double, double, double) { return std::array<double, 2>{0.0, 0.0}; };
  study::LarvaeSettings l = larvae(30, 30, 0);
  l.mortality = "weibull";
  l.weibull_shape = 2.0;
  l.weibull_scale_days = 5.0;
  l.mortality_as = "random";
  const LarvalClock clock(l);
  CHECK(clock.survival(5 * kDay) == Approx(std::exp(-1.0)));
  CHECK(clock.survival(2.5 * kDay) == Approx(std::exp(-0.25)));
  const std::size_t n = 20000;
  ParticleSet p = particles_at(n, 150.0, -20.0);
  StepSettings s;
  s.dt_s = 3600;
  run_steps(p, 120, s, clock, EarthModel::sphere(6371000.0), make_flow(still), kNoReef, 8);
  std::size_t alive = 0;
  for (Fate f : p.fate) alive += f == Fate::drifting;
  const double expected = std::exp(-1.0), sd = std::sqrt(expected * (1 - expected) / n);
  CHECK(std::fabs(static_cast<double>(alive) / n - expected) < 4 * sd);
}

TEST_CASE("settlement happens only inside the competency window") {
  auto still = [](double, double, double) { return std::array<double, 2>{0.0, 0.0}; };
  const BoxReef everywhere{{-1e9, 1e9, -90, 90}, 3};
  StepSettings s;
  s.dt_s = 3600;
  const auto earth = EarthModel::sphere(6371000.0);

  SECTION("infinite rate: a larva already over a reef settles the moment it becomes competent") {
    ParticleSet p = particles_at(50, 150.0, -20.0);
    const Run run = run_steps(p, 100, s, LarvalClock(larvae(2, 1, 0)), earth, make_flow(still),
                              everywhere);
    REQUIRE(run.settled.size() == 50);
    for (const auto& [i, step] : run.settled) {
      CHECK((step + 1) * s.dt_s == 2 * kDay);
      CHECK(p.reef[i] == 3);
    }
  }
  SECTION("finite rate: none before pre-competency, none after the end, geometric in between") {
    study::LarvaeSettings l = larvae(2, 1, 0);
    l.settle_rate_per_day = 1.0;
    const std::size_t n = 20000;
    ParticleSet p = particles_at(n, 150.0, -20.0);
    const Run run = run_steps(p, 100, s, LarvalClock(l), earth, make_flow(still), everywhere, 3);
    for (const auto& [i, step] : run.settled) {
      const double age = (step + 1) * s.dt_s;
      CHECK(age >= 2 * kDay);
      CHECK(age <= 3 * kDay);
    }
    // Ages 48 h … 72 h at step ends: 25 chances of probability 1 − e^(−1/24).
    const double expected = 1 - std::exp(-25.0 / 24.0);
    const double sd = std::sqrt(expected * (1 - expected) / n);
    CHECK(std::fabs(static_cast<double>(run.settled.size()) / n - expected) < 4 * sd);
    std::size_t died = 0;
    for (Fate f : p.fate) died += f == Fate::died;
    CHECK(died + run.settled.size() == n);  // the rest died at the end of competency
  }
}

TEST_CASE("boundaries: leaving the grid is lost, land holds or strands") {
  auto east = [](double, double, double) { return std::array<double, 2>{1.0, 0.0}; };
  StepSettings s;
  s.dt_s = 3600;
  const auto earth = EarthModel::sphere(6371000.0);
  const LarvalClock clock(larvae(10, 10, 0));
  SECTION("lost") {
    auto flow = make_flow(east, LonLatBox{149, 150.2, -21, -19});
    ParticleSet p = particles_at(5, 150.0, -20.0);
    const Run run = run_steps(p, 48, s, clock, earth, flow, kNoReef);
    for (Fate f : p.fate) CHECK(f == Fate::lost);
    std::uint64_t lost = 0;
    for (const auto& t : run.tallies) lost += t.lost;
    CHECK(lost == 5);
  }
  auto flow = make_flow(east);
  flow.land = LonLatBox{150.1, 151, -21, -19};
  SECTION("hold") {
    ParticleSet p = particles_at(5, 150.0, -20.0);
    const Run run = run_steps(p, 48, s, clock, earth, flow, kNoReef);
    for (std::size_t i = 0; i < 5; ++i) {
      CHECK(p.fate[i] == Fate::drifting);
      CHECK(p.lon[i] < 150.1);
      CHECK(p.lon[i] > 150.1 - 3600.0 / earth.metres_per_degree_lon(-20));
    }
    std::uint64_t contacts = 0;
    for (const auto& t : run.tallies) contacts += t.land_contacts;
    CHECK(contacts > 0);
  }
  SECTION("strand") {
    s.land = LandRule::strand;
    ParticleSet p = particles_at(5, 150.0, -20.0);
    run_steps(p, 48, s, clock, earth, flow, kNoReef);
    for (Fate f : p.fate) CHECK(f == Fate::stranded);
  }
}

TEST_CASE("release over a window, conservation of particles") {
  auto swirl = [](double t, double lon, double) {
    return std::array<double, 2>{0.3 * std::sin(t / 40000.0), 0.2 * std::cos(lon * 50)};
  };
  const std::size_t n = 3000;
  ParticleSet p = particles_at(n, 150.0, -20.0);
  for (std::size_t i = 0; i < n; ++i) {
    p.release_s[i] = static_cast<float>(7200.0 * i / n);
    p.source[i] = static_cast<std::uint32_t>(i % 3);
  }
  StepSettings s;
  s.dt_s = 900;
  s.kh_m2_s = 5;
  study::LarvaeSettings l = larvae(1, 2, 0.5);
  l.mortality_as = "random";
  auto flow = make_flow(swirl, LonLatBox{149.8, 150.3, -20.3, -19.7});
  flow.land = LonLatBox{150.1, 150.15, -20.0, -19.9};
  s.land = LandRule::strand;
  const BoxReef reef{{149.8, 150.04, -20.3, -19.7}, 0};
  const Run run = run_steps(p, 3 * 96 + 8, s, LarvalClock(l), EarthModel::sphere(6371000.0), flow,
                            reef, 11);
  std::uint64_t released = 0, settled = 0, died = 0, stranded = 0, lost = 0;
  for (const auto& t : run.tallies) {
    released += t.released, settled += t.settled, died += t.died, stranded += t.stranded,
        lost += t.lost;
  }
  CHECK(released == n);
  CHECK(settled + died + stranded + lost == n);  // nobody left drifting after the lifetime
  CHECK(settled == run.settled.size());
  INFO("settled " << settled << " died " << died << " stranded " << stranded << " lost " << lost);
  CHECK(settled > 0);
  CHECK(died > 0);
  // Released at the first step boundary at or after the release time.
  CHECK(run.tallies[0].released == static_cast<std::uint64_t>(std::ceil(n * 0.0)) + 1);
}

TEST_CASE("results are bit-identical for 1 and 2 threads") {
  auto swirl = [](double t, double lon, double lat) {
    return std::array<double, 2>{0.3 * std::sin(t / 30000.0 + lat * 40), 0.2 * std::cos(lon * 50)};
  };
  auto once = [&](int threads) {
    omp_set_num_threads(threads);
    ParticleSet p = particles_at(4000, 150.0, -20.0);
    StepSettings s;
    s.dt_s = 600;
    s.kh_m2_s = 3;
    study::LarvaeSettings l = larvae(0.5, 1, 0.3);
    l.mortality_as = "random";
    l.settle_rate_per_day = 4;
    const BoxReef reef{{150.0, 150.02, -20.02, -19.98}, 1};
    const Run run = run_steps(p, 300, s, LarvalClock(l), EarthModel::wgs84(), make_flow(swirl),
                              reef, 2024);
    return std::make_pair(p, run.settled);
  };
  const auto [a, sa] = once(1);
  const auto [b, sb] = once(2);
  omp_set_num_threads(omp_get_num_procs());
  CHECK(a.lon == b.lon);
  CHECK(a.lat == b.lat);
  CHECK(a.weight == b.weight);
  CHECK(a.fate == b.fate);
  CHECK(sa == sb);
  CHECK(!sa.empty());
}
