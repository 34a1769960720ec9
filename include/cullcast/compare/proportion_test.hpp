#pragma once
// Two-proportion z-test (pooled standard error) and the Benjamini-Hochberg
// false discovery rate adjustment, for comparing link estimates of two runs.
//
// z = (p2 - p1) / sqrt(p (1 - p) (1/n1 + 1/n2)), p = (x1 + x2) / (n1 + n2);
// z^2 equals Pearson's chi-squared statistic of the 2x2 table (x1, n1 - x1;
// x2, n2 - x2) without continuity correction (Agresti 2013, Categorical Data
// Analysis, 3rd ed., Wiley, ch. 2-3; from memory, section not checked), which
// is how the test script cross-checks it against scipy.
#include <cstdint>
#include <vector>

namespace cullcast::compare {

struct ProportionTest {
  double z = 0;             // (p2 - p1) / pooled standard error; 0 when untestable
  double p_value = 1;       // two-sided, standard normal
  double min_expected = 0;  // smallest expected cell count under H0 (normal approximation
                            // is poor below ~5: common practice, no source)
  bool testable = false;    // false when n1 or n2 is 0, or both proportions are 0 or 1
};

// x = successes (settling particles), n = trials (released particles); x <= n.
ProportionTest two_proportion_z(std::int64_t x1, std::int64_t n1, std::int64_t x2, std::int64_t n2);

// Two-sided tail probability of the standard normal, 2 (1 - Phi(|z|)).
double two_sided_normal_p(double z);

// Benjamini & Hochberg (1995, J. R. Stat. Soc. B 57:289-300) adjusted p-values
// ("q-values"): q_(i) = min_{k >= i} m p_(k) / k, capped at 1, in input order.
std::vector<double> benjamini_hochberg(const std::vector<double>& p_values);

}  // namespace cullcast::compare
