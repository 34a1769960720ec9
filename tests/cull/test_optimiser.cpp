// Cull optimiser: exact = brute-force enumeration of every plan; greedy within
// its stated bound; monotonic in budget; zero effort; reefs without a path.
#include <catch2/catch.hpp>

#include <cmath>
#include <functional>

#include "cull_test_support.hpp"
#include "cullcast/cull/optimiser.hpp"

using namespace cullcast::cull;
using cullcast::study::CullSettings;

namespace {

// Every plan over every site, each level 0..cap; the best feasible averted.
double brute_force(const CullModel& m, double budget, int member = -1) {
  Plan plan(m.sites.size(), 0);
  double best = 0;
  std::function<void(std::size_t)> rec = [&](std::size_t k) {
    if (k == plan.size()) {
      if (plan_cost(m, plan) <= budget + 1e-9) best = std::max(best, averted(m, plan, member));
      return;
    }
    for (int l = 0; l <= m.sites[k].max_level; ++l) {
      plan[k] = l;
      rec(k + 1);
    }
    plan[k] = 0;
  };
  rec(0);
  return best;
}

CullModel model(std::uint32_t seed, int n, CullSettings s, int events = 1) {
  const auto in = test::random_instance(seed, n, events);
  return build_model(in.connectivity, in.reefs, in.adults, in.eggs, s);
}

CullSettings small() {
  CullSettings s;
  s.effort_step_days = 0.5;
  s.max_days_per_reef = 1.5;  // levels 0..3
  s.efficiency_ha_per_day = 30;
  return s;
}

}  // namespace

TEST_CASE("exact optimiser equals brute-force enumeration, one season, no travel") {
  for (std::uint32_t seed = 1; seed <= 6; ++seed) {
    const CullModel m = model(seed, 5, small());
    for (double budget : {0.5, 1.5, 2.5, 4.0}) {
      const PlanResult r = optimise(m, budget, -1, "exact");
      CHECK(r.method == "exact-dp");
      CHECK(r.cost_days <= budget + 1e-9);
      CHECK(r.averted == Approx(brute_force(m, budget)).epsilon(1e-9));
    }
  }
}

TEST_CASE("exact optimiser equals brute force with travel from a home port") {
  CullSettings s = small();
  s.home_lon = 149.9;
  s.home_lat = -20.1;
  s.speed_knots = 10;
  s.hours_per_day = 2;  // make travel matter: ~0.9 vessel-days per 33 km
  for (std::uint32_t seed = 11; seed <= 15; ++seed) {
    const CullModel m = model(seed, 5, s);
    REQUIRE(m.travel);
    for (double budget : {1.0, 2.5, 4.0}) {
      const PlanResult r = optimise(m, budget, -1, "exact");
      CHECK(r.method == "exact-sets");
      CHECK(r.cost_days <= budget + 1e-9);
      CHECK(r.averted == Approx(brute_force(m, budget)).epsilon(1e-9));
    }
  }
}

TEST_CASE("exact optimiser equals brute force over a three-season horizon") {
  CullSettings s = small();
  s.horizon_seasons = 3;
  s.maturation_seasons = 1;
  for (std::uint32_t seed = 21; seed <= 24; ++seed) {
    const CullModel m = model(seed, 4, s);
    for (double budget : {1.0, 2.0}) {
      const PlanResult r = optimise(m, budget, -1, "exact");
      CHECK(r.method == "exact-enumeration");
      CHECK(r.averted == Approx(brute_force(m, budget)).epsilon(1e-9));
    }
  }
}

TEST_CASE("greedy stays within its stated bound of the optimum") {
  // Leskovec et al. (2007), KDD 2007:420-429: the better of the benefit-cost and
  // unit-cost greedy plans is within (1 - 1/e)/2 of the optimum for a monotone
  // submodular objective with additive costs.
  int checked = 0;
  for (std::uint32_t seed = 31; seed <= 40; ++seed) {
    const CullModel m = model(seed, 6, small());
    for (double budget : {1.0, 2.0, 3.5}) {
      const PlanResult g = optimise(m, budget, -1, "greedy");
      const double opt = brute_force(m, budget);
      CHECK(g.method == "greedy");
      CHECK(g.cost_days <= budget + 1e-9);
      CHECK(g.averted <= opt * (1 + 1e-9));
      if (g.guarantee_applies) {
        ++checked;
        CHECK(g.guarantee == Approx(0.5 * (1 - std::exp(-1.0))));
        CHECK(g.averted >= g.guarantee * opt);
      }
    }
  }
  CHECK(checked > 0);
}

TEST_CASE("more budget never averts less, zero budget and zero effort avert nothing") {
  CullSettings s = small();
  s.home_lon = 149.9;
  s.home_lat = -20.1;
  const CullModel m = model(51, 6, s);
  CHECK(averted(m, Plan(m.sites.size(), 0)) == 0.0);
  CHECK(optimise(m, 0.0).averted == 0.0);
  const auto curve = budget_curve(m, 5.0, 10);
  REQUIRE(curve.size() >= 2);
  CHECK(curve.front().averted == 0.0);
  for (std::size_t k = 1; k < curve.size(); ++k) CHECK(curve[k].averted >= curve[k - 1].averted);
  // Also for the greedy method, whose own plans need not be monotone in budget.
  CullSettings sg = s;
  sg.method = "greedy";
  const CullModel mg = model(52, 8, sg);
  const auto cg = budget_curve(mg, 6.0, 12);
  for (std::size_t k = 1; k < cg.size(); ++k) CHECK(cg[k].averted >= cg[k - 1].averted);
}

TEST_CASE("a reef with no path to a priority reef is never chosen over one with a path") {
  // Reefs 0 and 1 identical (area, adults), but only reef 1 sends larvae to the
  // priority reef 2; reef 0 sends larvae only to itself.
  const std::vector<std::vector<std::vector<int>>> settlers = {{{40, 0, 0}, {0, 10, 30}, {0, 0, 5}}};
  const auto c = cullcast::network::build_connectivity(test::settlement(settlers, 1000), "no-path test");
  const auto reefs = test::reef_line({50, 50, 50}, {0, 0, 1});
  for (const char* method : {"exact", "greedy"}) {
    CullSettings s = small();
    s.method = method;
    const CullModel m = build_model(c, reefs, {5000, 5000, 0}, {33.5e6, 33.5e6, 33.5e6}, s);
    for (double budget : {0.5, 1.0, 1.5, 3.0}) {
      const PlanResult r = optimise(m, budget);
      for (std::size_t k = 0; k < m.sites.size(); ++k) {
        if (m.sites[k].id == "T-0") CHECK(r.plan[k] == 0);
        if (m.sites[k].id == "T-1") CHECK(r.plan[k] > 0);
      }
    }
  }
}
