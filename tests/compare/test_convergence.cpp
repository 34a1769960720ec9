// Particle count for a target precision (Cochran 1977, Sampling Techniques,
// 3rd ed.: n0 = z^2 p q / d^2; from memory) and the convergence report.
#include <catch2/catch.hpp>
#include <cmath>

#include "compare_test_support.hpp"
#include "cullcast/compare/convergence.hpp"

using namespace cullcast::compare;
using Catch::Detail::Approx;

TEST_CASE("normal quantile matches scipy's value at 0.975 and is the inverse of the tail",
          "[compare]") {
  // 1.959963984540054 printed by scipy.stats.norm.ppf(0.975), Debian python3-scipy 1.10.1
  CHECK(normal_quantile(0.975) == Approx(1.959963984540054).epsilon(1e-12));
  CHECK(normal_quantile(0.5) == Approx(0).margin(1e-12));
  for (double z : {-3.0, -1.0, 0.3, 2.5}) {
    CHECK(normal_quantile(0.5 * std::erfc(-z / std::sqrt(2.0))) == Approx(z).epsilon(1e-10));
  }
  CHECK_THROWS(normal_quantile(0));
}

TEST_CASE("particles for a relative precision: Cochran's n0 with d = r p", "[compare]") {
  // p = 0.01, r = 0.2, 95 %: n0 = 1.95996^2 * 0.99 / (0.04 * 0.01) = 9507.4 -> 9508
  const double z = 1.959963984540054;
  CHECK(particles_for_precision(0.01, 0.2, 0.95) ==
        static_cast<long>(std::ceil(z * z * 0.99 / (0.04 * 0.01))));
  CHECK(particles_for_precision(0.01, 0.2, 0.95) == 9508);
  // halving r quadruples n (the 1/r^2 law)
  const auto n1 = particles_for_precision(1e-3, 0.5, 0.95),
             n2 = particles_for_precision(1e-3, 0.25, 0.95);
  CHECK(static_cast<double>(n2) / n1 == Approx(4).epsilon(1e-3));
  // and that n reaches the target
  CHECK(relative_half_width(0.01, 9508, 0.95) <= 0.2);
  CHECK(relative_half_width(0.01, 9000, 0.95) > 0.2);
}

TEST_CASE("convergence report lists the links and ranks that move", "[compare]") {
  using namespace cullcast::compare::test;
  TempDir a("conv-a"), b("conv-b");
  const std::vector<std::pair<std::string, std::string>> roles = {
      {"R1", "source"}, {"R2", "sink"}, {"R3", "sink"}};
  write_run(
      a.path,
      {{"R1", "R2", 1000, 100, 0.1}, {"R1", "R3", 1000, 10, 0.01}, {"R2", "R3", 1000, 1, 0.001}},
      roles, {{"R1", 2, 30}, {"R2", 1, 10}});
  write_run(
      b.path,
      {{"R1", "R2", 2000, 204, 0.102}, {"R1", "R3", 2000, 40, 0.02}, {"R2", "R3", 2000, 2, 0.001}},
      roles, {{"R2", 1, 25}, {"R1", 2, 20}});
  const RunComparison c = compare_runs(read_run_outputs(a.path), read_run_outputs(b.path));
  ConvergenceOptions o;
  o.probability = 0.005;
  o.relative_precision = 0.2;
  const ConvergenceReport r = assess_convergence(c, o);
  CHECK(r.links_considered == 2);  // R2->R3 is below 0.005 in both
  REQUIRE(r.moving.size() == 1);   // R1->R2 moved 2 %, R1->R3 50 %
  CHECK(r.moving[0].sink_id == "R3");
  CHECK(r.moving[0].relative_change == Approx(0.5));
  CHECK(r.rank_shifts.size() == 2);
  CHECK(r.particles_b == 2000);
  CHECK(r.particles_needed == particles_for_precision(0.005, 0.2, 0.95));
}
