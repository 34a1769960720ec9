// Kendall's tau-b: Kendall, M. G. (1945), "The treatment of ties in ranking
// problems", Biometrika 33:239-251.
#include "cullcast/compare/rank_correlation.hpp"

#include <cmath>
#include <limits>
#include <stdexcept>

namespace cullcast::compare {

TauB kendall_tau_b(const std::vector<double>& x, const std::vector<double>& y) {
  if (x.size() != y.size()) {
    throw std::invalid_argument("kendall_tau_b: the two rankings differ in length");
  }
  TauB t;
  const std::size_t n = x.size();
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = i + 1; j < n; ++j) {
      const double dx = x[i] - x[j], dy = y[i] - y[j];
      if (dx == 0) ++t.tied_x;
      if (dy == 0) ++t.tied_y;
      if (dx == 0 || dy == 0) continue;
      if ((dx > 0) == (dy > 0)) {
        ++t.concordant;
      } else {
        ++t.discordant;
      }
    }
  }
  const double n0 = static_cast<double>(n) * static_cast<double>(n - (n > 0)) / 2;
  const double denominator =
      std::sqrt((n0 - static_cast<double>(t.tied_x)) * (n0 - static_cast<double>(t.tied_y)));
  t.tau = denominator > 0 ? static_cast<double>(t.concordant - t.discordant) / denominator
                          : std::numeric_limits<double>::quiet_NaN();
  return t;
}

}  // namespace cullcast::compare
