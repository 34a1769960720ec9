#pragma once
// Sampling uncertainty of a settlement probability estimated from n released
// particles, x of which settled on a reef.
//   Wilson score interval: Wilson, E. B. (1927), "Probable inference, the law
//   of succession, and statistical inference", J. Am. Stat. Assoc. 22:209-212.
//   Rule of three: Hanley, J. A. & Lippman-Hand, A. (1983), "If nothing goes
//   wrong, is everything all right?", JAMA 249:1743-1745.
#include <cstdint>

namespace cullcast::network {

struct Interval {
  double low = 0;   // probability
  double high = 0;  // probability
};

// Two-sided standard-normal quantile z for a confidence level in (0,1),
// e.g. 0.95 -> 1.959964.
double normal_quantile_two_sided(double confidence);

// Wilson score interval for x successes out of n trials (x may be a weighted,
// non-integer count in [0, n]). n = 0 gives [0, 1].
//   centre = (x + z^2/2) / (n + z^2),
//   half   = z / (n + z^2) * sqrt(x (n - x) / n + z^2 / 4).
Interval wilson_interval(double x, double n, double confidence);

// Resolution limit: the smallest non-zero probability n particles can show
// (one settler), 1/n. Below it a link reads as 0.
double resolution_limit(std::int64_t n);

// Upper 95 % bound on a probability when none of n particles settled:
// 3/n (rule of three; exact bound 1 - 0.05^(1/n)).
double rule_of_three(std::int64_t n);

// Particles per source needed so that a link of probability p has a relative
// standard error of at most e: from Var(p_hat) = p (1 - p) / n,
// n >= (1 - p) / (p e^2), rounded up.
std::int64_t particles_for_relative_error(double p, double e);

}  // namespace cullcast::network
