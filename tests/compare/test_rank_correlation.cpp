// Kendall's tau-b (Kendall 1945, Biometrika 33:239-251). Against
// scipy.stats.kendalltau in check_against_scipy.py; here the defining cases.
#include <catch2/catch.hpp>
#include <cmath>

#include "cullcast/compare/rank_correlation.hpp"

using namespace cullcast::compare;
using Catch::Detail::Approx;

TEST_CASE("tau-b: same order 1, reversed order -1", "[compare]") {
  CHECK(kendall_tau_b({1, 2, 3, 4, 5}, {10, 20, 30, 40, 50}).tau == Approx(1));
  CHECK(kendall_tau_b({1, 2, 3, 4, 5}, {5, 4, 3, 2, 1}).tau == Approx(-1));
}

TEST_CASE("tau-b counts pairs by hand, with ties", "[compare]") {
  // x = 1 2 3 4, y = 1 3 2 2: pairs (i<j): (1,2) C, (1,3) C, (1,4) C, (2,3) D,
  // (2,4) D, (3,4) tied in y. C = 3, D = 2, n0 = 6, n1 = 0, n2 = 1:
  // tau_b = 1 / sqrt(6 * 5) (definition in Kendall 1945).
  const TauB t = kendall_tau_b({1, 2, 3, 4}, {1, 3, 2, 2});
  CHECK(t.concordant == 3);
  CHECK(t.discordant == 2);
  CHECK(t.tied_x == 0);
  CHECK(t.tied_y == 1);
  CHECK(t.tau == Approx(1 / std::sqrt(30.0)));
}

TEST_CASE("tau-b is undefined for a constant ranking and refuses unequal lengths", "[compare]") {
  CHECK(std::isnan(kendall_tau_b({1, 1, 1}, {1, 2, 3}).tau));
  CHECK(std::isnan(kendall_tau_b({1}, {1}).tau));
  CHECK_THROWS_AS(kendall_tau_b({1, 2}, {1}), std::invalid_argument);
}
