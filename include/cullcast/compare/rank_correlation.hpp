#pragma once
// Kendall's tau-b rank correlation with the tie correction of Kendall (1945,
// "The treatment of ties in ranking problems", Biometrika 33:239-251):
//   tau_b = (C - D) / sqrt((n0 - n1)(n0 - n2)),
// n0 = n(n-1)/2 pairs, n1 and n2 the pairs tied in x and in y, C and D the
// concordant and discordant pairs (pairs tied in x or y count in neither).
#include <vector>

namespace cullcast::compare {

struct TauB {
  double tau = 0;            // -1..1; NaN when either variable is constant or n < 2
  long long concordant = 0;  // C
  long long discordant = 0;  // D
  long long tied_x = 0;      // n1
  long long tied_y = 0;      // n2
};

// O(n^2) pair count: the rankings compared here hold tens to a few thousand reefs.
// x and y must have the same length (std::invalid_argument otherwise).
TauB kendall_tau_b(const std::vector<double>& x, const std::vector<double>& y);

}  // namespace cullcast::compare
