#pragma once
// Small in-memory settlement data and matrices for the network tests.
#include <cstdint>
#include <random>
#include <string>
#include <vector>

#include "cullcast/drift/settlement_log.hpp"
#include "cullcast/network/connectivity_matrix.hpp"

namespace cullcast::network::test {

// One event; reefs R-0..R-(n-1), one reef source each; settlers[i][j] = particles
// from source i settling on reef j (row = source); released[i] per source.
inline drift::SettlementData one_event(const std::vector<std::vector<int>>& settlers,
                                       const std::vector<std::int64_t>& released, int events = 1) {
  drift::SettlementData d;
  const std::size_t n = released.size();
  for (std::size_t i = 0; i < n; ++i) {
    d.tables.source_ids.push_back("R-" + std::to_string(i));
    d.tables.source_kinds.push_back(0);
    d.tables.source_reefs.push_back(static_cast<std::int32_t>(i));
    d.tables.reef_ids.push_back("R-" + std::to_string(i));
  }
  for (int e = 0; e < events; ++e) {
    d.tables.event_labels.push_back("event " + std::to_string(e + 1));
    d.tables.event_starts_s.push_back(86400.0 * e);
    for (std::size_t i = 0; i < n; ++i) {
      drift::FateCounts f;
      f.released = released[i];
      for (std::size_t j = 0; j < n; ++j) {
        for (int k = 0; k < settlers[i][j]; ++k) {
          d.records.push_back({static_cast<std::uint32_t>(e), static_cast<std::uint32_t>(i),
                               static_cast<std::int32_t>(j), 0.0, 20 * 86400.0, 20 * 86400.0, 1.0});
        }
        f.settled += settlers[i][j];
      }
      f.died = f.released - f.settled;
      d.fates.push_back(f);
    }
  }
  return d;
}

inline SparseMatrix from_dense(const std::vector<std::vector<double>>& a) {
  const auto n = static_cast<Eigen::Index>(a.size());
  const auto m = static_cast<Eigen::Index>(a.empty() ? 0 : a[0].size());
  std::vector<Eigen::Triplet<double>> t;
  for (Eigen::Index i = 0; i < n; ++i) {
    for (Eigen::Index j = 0; j < m; ++j) {
      if (a[i][j] != 0) t.emplace_back(i, j, a[i][j]);
    }
  }
  SparseMatrix s(n, m);
  s.setFromTriplets(t.begin(), t.end());
  return s;
}

// Random sub-stochastic matrix: each link present with probability `density`,
// rows scaled to sum to at most `row_max`.
inline SparseMatrix random_matrix(int n, double density, double row_max, std::uint32_t seed) {
  std::mt19937 gen(seed);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  std::vector<std::vector<double>> a(n, std::vector<double>(n, 0.0));
  for (int i = 0; i < n; ++i) {
    double sum = 0;
    for (int j = 0; j < n; ++j) {
      if (u(gen) < density) sum += (a[i][j] = u(gen));
    }
    const double scale = row_max * u(gen);
    for (int j = 0; j < n; ++j) {
      if (sum > 0) a[i][j] *= scale / sum;
    }
  }
  return from_dense(a);
}

}  // namespace cullcast::network::test
