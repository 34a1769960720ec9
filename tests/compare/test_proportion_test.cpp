// Two-proportion z-test and Benjamini-Hochberg q-values. The same functions
// are also checked against Debian's python3-scipy by check_against_scipy.py
// (through `cullcast compare`).
#include <catch2/catch.hpp>
#include <cmath>

#include "cullcast/compare/proportion_test.hpp"

using namespace cullcast::compare;
using Catch::Detail::Approx;

TEST_CASE("two-proportion z: square equals Pearson's chi-squared of the 2x2 table", "[compare]") {
  // Identity z^2 = X^2 (no continuity correction) for a 2x2 table: Agresti
  // (2013), Categorical Data Analysis, 3rd ed., ch. 2-3 (from memory). X^2 is
  // computed here from its definition, sum (O - E)^2 / E.
  const long x1 = 37, n1 = 300, x2 = 58, n2 = 310;
  const ProportionTest t = two_proportion_z(x1, n1, x2, n2);
  const double obs[2][2] = {{double(x1), double(n1 - x1)}, {double(x2), double(n2 - x2)}};
  const double rows[2] = {double(n1), double(n2)};
  const double cols[2] = {double(x1 + x2), double(n1 + n2 - x1 - x2)};
  const double total = n1 + n2;
  double chi2 = 0;
  for (int i = 0; i < 2; ++i) {
    for (int j = 0; j < 2; ++j) {
      const double e = rows[i] * cols[j] / total;
      chi2 += (obs[i][j] - e) * (obs[i][j] - e) / e;
    }
  }
  REQUIRE(t.testable);
  CHECK(t.z * t.z == Approx(chi2).epsilon(1e-12));
  CHECK(t.z > 0);  // B's proportion is larger
  // p-value of chi-squared with 1 degree of freedom = P(|Z| > |z|); min expected cell
  CHECK(t.p_value == Approx(std::erfc(std::sqrt(chi2 / 2))).epsilon(1e-12));
  CHECK(t.min_expected == Approx(cols[0] * rows[0] / total));
}

TEST_CASE("two-proportion z: equal proportions, symmetry, untestable cases", "[compare]") {
  CHECK(two_proportion_z(10, 100, 20, 200).z == Approx(0).margin(1e-15));
  CHECK(two_proportion_z(10, 100, 20, 200).p_value == Approx(1));
  const ProportionTest ab = two_proportion_z(3, 50, 12, 60), ba = two_proportion_z(12, 60, 3, 50);
  CHECK(ab.z == Approx(-ba.z));
  CHECK(ab.p_value == Approx(ba.p_value));
  CHECK_FALSE(two_proportion_z(0, 100, 0, 100).testable);    // never seen in either
  CHECK_FALSE(two_proportion_z(100, 100, 50, 50).testable);  // always
  CHECK_FALSE(two_proportion_z(0, 0, 5, 10).testable);       // nothing released
  CHECK(two_proportion_z(0, 100, 0, 100).p_value == 1);
}

TEST_CASE("two-sided normal tail at the familiar quantiles", "[compare]") {
  // 1.959963984540054 = scipy.stats.norm.ppf(0.975) (Debian python3-scipy 1.10.1)
  CHECK(two_sided_normal_p(1.959963984540054) == Approx(0.05).epsilon(1e-12));
  CHECK(two_sided_normal_p(0) == Approx(1));
}

TEST_CASE("Benjamini-Hochberg q-values follow the step-up rule", "[compare]") {
  // Benjamini & Hochberg (1995), J. R. Stat. Soc. B 57:289-300: reject the k
  // smallest p when p_(k) <= k alpha / m; the adjusted value is
  // min_{j >= i} m p_(j) / j. Worked by hand for m = 4:
  // sorted 0.01, 0.03, 0.04, 0.5 -> 0.04, 0.06, 0.0533.., 0.5 -> running minimum from the top.
  const std::vector<double> q = benjamini_hochberg({0.01, 0.04, 0.03, 0.5});
  REQUIRE(q.size() == 4);
  CHECK(q[0] == Approx(0.04));
  CHECK(q[1] == Approx(0.04 * 4 / 3));
  CHECK(q[2] == Approx(0.04 * 4 / 3));
  CHECK(q[3] == Approx(0.5));
  CHECK(benjamini_hochberg({}).empty());
  CHECK(benjamini_hochberg({0.9, 0.95})[1] == Approx(0.95));
}
