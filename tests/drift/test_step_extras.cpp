// The optional physics of the drift step: vertical reflection and particle
// conservation, depth bands and ontogenetic tables, the Smagorinsky closure
// on an exact linear shear, varying-Kh spread, and temperature/food larvae
// reproducing the published relations at their published points.
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <vector>

#include "analytic_flow.hpp"
#include "cullcast/drift/drift_step.hpp"

using namespace cullcast;
using namespace cullcast::drift;
using cullcast::test::BoxReef;
using cullcast::test::LonLatBox;
using cullcast::test::make_flow;

namespace {

constexpr double kDay = 86400.0;

struct ConstantFields {
  double kh_value = 1.0, kv_value = 0.0, floor_m = std::numeric_limits<double>::infinity();
  double temperature = std::numeric_limits<double>::quiet_NaN();
  double chlorophyll = std::numeric_limits<double>::quiet_NaN();
  double kh(double, double, double) const noexcept { return kh_value; }
  double kv(double, double, double) const noexcept { return kv_value; }
  double sea_floor_m(double, double) const noexcept { return floor_m; }
  double temperature_c(double, double, double, double) const noexcept { return temperature; }
  double chlorophyll_mg_m3(double, double, double, double) const noexcept { return chlorophyll; }
};

// A still ocean with an upward velocity w (m/s): status water everywhere.
struct VerticalFlow {
  double w = 0;
  currents::SampleStatus status(double, double) const noexcept { return currents::SampleStatus::water; }
  currents::FlowSample sample(double, double, double, double) const noexcept {
    return {0.0, 0.0, w, currents::SampleStatus::water};
  }
};

ParticleSet particles_at(std::size_t n, double depth) {
  ParticleSet p;
  p.resize(n);
  for (std::size_t i = 0; i < n; ++i) {
    p.lon[i] = 150.0;
    p.lat[i] = -20.0;
    p.depth_m[i] = static_cast<float>(depth);
    p.index[i] = static_cast<std::uint32_t>(i);
  }
  return p;
}

study::LarvaeSettings no_mortality(double pre_days, double comp_days) {
  study::LarvaeSettings l;
  l.precompetent_days = pre_days;
  l.competent_days = comp_days;
  l.mortality_per_day = 0.0;
  return l;
}

const BoxReef kNoReef{{0, -1, 0, -1}, 0};
const BoxReef kReefEverywhere{{-1e9, 1e9, -90, 90}, 3};

template <class Flow, class Lookup, class Extras>
std::vector<StepTally> run(ParticleSet& p, int steps, const StepSettings& s, const LarvalClock& clock,
                           const Flow& flow, const Lookup& reefs, const Extras& extras) {
  const CounterRandom rng(11);
  const auto earth = EarthModel::sphere(6371000.0);
  std::vector<std::uint8_t> now;
  std::vector<StepTally> out;
  for (int k = 0; k < steps; ++k) out.push_back(drift_step(p, k, s, clock, earth, flow, reefs, rng, now, extras));
  return out;
}

}  // namespace

TEST_CASE("3-D: reflection at surface and sea floor conserves particles") {
  // [D] a reflecting layer keeps every particle: count and bounds are exact.
  ConstantFields fields;
  fields.floor_m = 20.0;
  study::MotionSettings m;
  m.depth = "3d";
  StepExtras<ConstantFields> x;
  x.fields = &fields;
  x.depth = DepthRule(m);
  x.kv_m2_s = 0.05;  // σ ≈ 7.7 m per 600 s step: many reflections
  const LarvalClock clock(no_mortality(1, 2));
  StepSettings s;
  s.dt_s = 600;
  for (double w : {0.0, 0.01, -0.01}) {  // still, rising, sinking water
    ParticleSet p = particles_at(4000, 10.0);
    const VerticalFlow flow{w};
    const auto tallies = run(p, 100, s, clock, flow, kNoReef, x);
    std::size_t drifting = 0;
    for (std::size_t i = 0; i < p.size(); ++i) {
      drifting += p.fate[i] == Fate::drifting;
      REQUIRE(p.depth_m[i] >= 0.0f);
      REQUIRE(p.depth_m[i] <= 20.0f);
    }
    CHECK(drifting == p.size());
    CHECK(tallies.back().particle_steps == p.size());
  }
}

TEST_CASE("3-D: constant Kv spreads as 2 Kv t through the drift step") {
  // Fickian spread (Hunter, Craig & Phillips 1993): variance 2·Kv·t, standard
  // error of a sample variance 2Kt·sqrt(2/(N−1)); layer far deeper than σ.
  ConstantFields fields;
  fields.floor_m = 4000.0;
  study::MotionSettings m;
  m.depth = "3d";
  StepExtras<ConstantFields> x;
  x.fields = &fields;
  x.depth = DepthRule(m);
  x.kv_m2_s = 0.01;
  const LarvalClock clock(no_mortality(1, 2));
  StepSettings s;
  s.dt_s = 600;
  ParticleSet p = particles_at(20000, 2000.0);
  run(p, 36, s, clock, VerticalFlow{}, kNoReef, x);
  double mean = 0, var = 0;
  for (float z : p.depth_m) mean += z;
  mean /= p.size();
  for (float z : p.depth_m) var += (z - mean) * (z - mean);
  var /= p.size() - 1;
  const double expected = 2 * 0.01 * 36 * 600;
  CHECK(std::fabs(var - expected) < 4 * expected * std::sqrt(2.0 / (p.size() - 1)));
}

TEST_CASE("3-D: a downward velocity carries larvae by w·t") {
  ConstantFields fields;
  study::MotionSettings m;
  m.depth = "3d";
  StepExtras<ConstantFields> x;
  x.fields = &fields;
  x.depth = DepthRule(m);
  const LarvalClock clock(no_mortality(1, 2));
  StepSettings s;
  s.dt_s = 600;
  ParticleSet p = particles_at(3, 5.0);
  run(p, 10, s, clock, VerticalFlow{-0.001}, kNoReef, x);  // w = −1 mm/s (down)
  CHECK(p.depth_m[0] == Approx(5.0 + 0.001 * 6000).epsilon(1e-6));
}

TEST_CASE("band: the walk stays inside the band, and an age table moves larvae to it") {
  study::MotionSettings m;
  m.depth = "band";
  m.band_top_m = 3;
  m.band_bottom_m = 8;
  StepExtras<ConstantFields> x;
  ConstantFields fields;
  x.fields = &fields;
  x.depth = DepthRule(m);
  x.kv_m2_s = 0.01;
  const LarvalClock clock(no_mortality(5, 5));
  StepSettings s;
  s.dt_s = 600;
  ParticleSet p = particles_at(2000, 5.0);
  run(p, 200, s, clock, VerticalFlow{}, kNoReef, x);
  for (float z : p.depth_m) {
    REQUIRE(z >= 3.0f);
    REQUIRE(z <= 8.0f);
  }
  // Ontogenetic table: surface band at day 0, 20–30 m from day 2; swimming at
  // 2 mm/s covers 20 m in 10 000 s (≈ 17 steps) once the band has moved.
  m.depth_by_age = {{0, 0, 2}, {1, 0, 2}, {2, 20, 30}};
  m.swim_m_s = 0.002;
  x.depth = DepthRule(m);
  CHECK(x.depth.band_at(1.5 * kDay).top_m == Approx(10.0));  // linear between rows
  ParticleSet q = particles_at(500, 1.0);
  run(q, 3 * 144, s, clock, VerticalFlow{}, kNoReef, x);
  for (float z : q.depth_m) {
    REQUIRE(z >= 20.0f);
    REQUIRE(z <= 30.0f);
  }
}

TEST_CASE("Smagorinsky closure on a linear shear") {
  // Smagorinsky (1963) form Kh = C·Δ²·sqrt(ux² + vy² + ½(uy + vx)²) [see
  // step_extras.hpp]; for u = S·y (y northward metres), v = 0, central
  // differences are exact and Kh = C·Δ²·S/√2 [D].
  const auto earth = EarthModel::sphere(6371000.0);
  const double metres_per_deg = earth.metres_per_degree_lat(0);
  const double S = 1e-5;  // s-1
  const auto flow = make_flow([&](double, double, double lat) {
    return std::array<double, 2>{S * lat * metres_per_deg, 0.0};
  });
  const auto metric = earth.near(-20.0);
  const double kh = smagorinsky_kh(flow, 0.0, 150.0, -20.0, 0.0, metric, 1000.0, 0.1);
  CHECK(kh == Approx(0.1 * 1e6 * S / std::sqrt(2.0)).epsilon(1e-6));
}

TEST_CASE("varying-Kh path with a uniform field spreads as 2 Kh t") {
  ConstantFields fields;
  fields.kh_value = 5.0;
  StepExtras<ConstantFields> x;
  x.fields = &fields;
  x.kh_mode = KhMode::field;
  const LarvalClock clock(no_mortality(1, 2));
  StepSettings s;
  s.dt_s = 600;
  const auto flow = make_flow([](double, double, double) { return std::array<double, 2>{0.0, 0.0}; });
  ParticleSet p = particles_at(20000, 0.0);
  run(p, 24, s, clock, flow, kNoReef, x);
  const double m_per_deg = 6371000.0 * 3.14159265358979323846 / 180;
  double var = 0;
  for (double lat : p.lat) var += std::pow((lat + 20.0) * m_per_deg, 2);
  var /= p.size();
  const double expected = 2 * 5.0 * 24 * 600;
  CHECK(std::fabs(var - expected) < 4 * expected * std::sqrt(2.0 / p.size()));
}

TEST_CASE("temperature: +2 degC shortens development by 30 percent (Uthicke et al. 2015)") {
  // Uthicke et al. (2015), Sci. Rep. 5:8402: +2 °C shortened development ≈30 %.
  study::LarvaeSettings l = no_mortality(10, 20);
  const LarvalEnvironment env(l, true, false);
  CHECK(1.0 / env.development_rate(l.reference_temperature_c + 2) == Approx(0.70).epsilon(1e-3));
  CHECK(env.development_rate(l.reference_temperature_c) == 1.0);
  CHECK(env.development_rate(std::nan("")) == 1.0);  // no field: reference development
  // Through the step: competency (settlement on a reef everywhere) after 7 days, not 10.
  ConstantFields fields;
  fields.temperature = l.reference_temperature_c + 2;
  StepExtras<ConstantFields> x;
  x.fields = &fields;
  x.environment = LarvalEnvironment(l, true, false);
  const LarvalClock clock(l);
  StepSettings s;
  s.dt_s = 3600;
  const auto flow = make_flow([](double, double, double) { return std::array<double, 2>{0.0, 0.0}; });
  ParticleSet p = particles_at(10, 0.0);
  p.enable_development();
  const auto tallies = run(p, 12 * 24, s, clock, flow, kReefEverywhere, x);
  int settled_step = -1;
  for (std::size_t k = 0; k < tallies.size(); ++k) {
    if (tallies[k].settled > 0 && settled_step < 0) settled_step = static_cast<int>(k);
  }
  CHECK(std::fabs((settled_step + 1) * 3600.0 - 0.7 * 10 * kDay) <= 3600.0);
}

TEST_CASE("food: odds of completing development x8 per doubling up to 3 ug/L (Fabricius et al. 2010)") {
  // Fabricius, Okaji & De'ath (2010), Coral Reefs 29:593–605: ≈8-fold odds per
  // doubling of chlorophyll up to ≈3 µg/L; [D] logit slope ln 8 = 2.079.
  const study::LarvaeSettings l;
  const LarvalEnvironment env(l, false, true);
  auto odds = [&](double c) {
    const double p = env.completion_probability(c);
    return p / (1 - p);
  };
  for (double c : {0.1875, 0.375, 0.75, 1.5}) CHECK(odds(2 * c) / odds(c) == Approx(8.0).epsilon(1e-9));
  CHECK(std::log(odds(1.5)) - std::log(odds(0.75)) == Approx(2.0794).epsilon(1e-4));
  CHECK(odds(6.0) == Approx(odds(3.0)));  // saturation above 3 µg/L
  CHECK(env.completion_probability(3.0) == Approx(0.9));
  CHECK(env.completion_probability(std::nan("")) == Approx(0.9));  // no data: no penalty
  // Through the step: weight at settlement = completion probability at the food met.
  ConstantFields fields;
  fields.chlorophyll = 0.75;
  StepExtras<ConstantFields> x;
  x.fields = &fields;
  x.environment = LarvalEnvironment(no_mortality(2, 5), false, true);
  const LarvalClock clock(no_mortality(2, 5));
  StepSettings s;
  s.dt_s = 3600;
  const auto flow = make_flow([](double, double, double) { return std::array<double, 2>{0.0, 0.0}; });
  ParticleSet p = particles_at(5, 0.0);
  p.enable_development();
  run(p, 3 * 24, s, clock, flow, kReefEverywhere, x);
  CHECK(p.fate[0] == Fate::settled);
  const double expected = 1.0 / (1.0 + std::exp(-(std::log(9.0) - 2 * std::log(8.0))));  // two halvings below 3
  CHECK(p.weight[0] == Approx(expected).epsilon(1e-5));
}

TEST_CASE("deepest reach: release depths, the band's bottom or the age table's; unbounded in 3-D") {
  study::Study s;
  s.spawning.resize(2);
  s.spawning[0].depth_m = 2.0;
  s.spawning[1].depth_m = 6.0;
  s.motion.depth = "fixed";
  CHECK(drift::deepest_reach_m(s) == 6.0);
  s.backward.sink = "R";  // a backward run releases on the sink at its own depth
  s.backward.depth_m = 9.0;
  CHECK(drift::deepest_reach_m(s) == 9.0);
  s.motion.depth = "band";
  s.motion.band_bottom_m = 15.0;
  CHECK(drift::deepest_reach_m(s) == 15.0);
  s.motion.depth_by_age = {{0.0, 0.0, 5.0}, {10.0, 8.0, 22.0}};
  CHECK(drift::deepest_reach_m(s) == 22.0);
  s.motion.depth = "fixed";  // the table sets the depth in fixed mode too
  CHECK(drift::deepest_reach_m(s) == 22.0);
  s.motion.depth = "3d";
  CHECK(std::isinf(drift::deepest_reach_m(s)));
}
