#pragma once
// CONTRACT. Metapopulation persistence: Hastings & Botsford (2006), "Persistence
// of spatial populations depends on returning home", PNAS 103:6067-6072. A
// network of reefs persists when the dominant eigenvalue lambda of its
// reproduction-scaled connectivity matrix M exceeds 1, with
//   M_ij = R_i P_ij   (row i = source, column j = sink; lambda(M) = lambda(M^T),
//                      so orientation does not change it),
// R_i = lifetime reproduction of a settler on reef i, in settlers (an input:
// biology is not computed here). For uniform R, lambda(M) = R lambda(P), and
// 1 / lambda(P) is the lifetime reproduction needed for persistence.
//
// Method: M is non-negative, so its dominant eigenvalue is its Perron root
// (spectral radius), and that of a reducible matrix is the largest Perron
// root of its strongly connected blocks. Each block is solved densely
// (Eigen::EigenSolver) when small, otherwise by power iteration on the
// shifted block B + I (primitive, so the iteration converges even when the
// block is periodic, e.g. a ring of reefs).
#include <string>
#include <vector>

#include "cullcast/network/connectivity_matrix.hpp"

namespace cullcast::network {

struct EigenOptions {
  int dense_limit = 300;         // blocks up to this many reefs are solved densely
  int max_iterations = 100000;   // power iteration
  double tolerance = 1e-12;      // relative change of the eigenvalue estimate
};

struct DominantEigen {
  double value = 0;                     // dominant eigenvalue (spectral radius), >= 0
  std::vector<double> component_value;  // per strongly connected component (index as in strong_components(m, 0))
  std::vector<int> component;           // component of each reef
  bool converged = true;                // false if a power iteration hit max_iterations
  std::string method;                   // "dense", "power" or "dense+power"
};

// Dominant eigenvalue of a square non-negative matrix.
DominantEigen dominant_eigenvalue(const SparseMatrix& m, const EigenOptions& options = {});

// M = diag(R) P.
SparseMatrix reproduction_scaled(const SparseMatrix& p, const std::vector<double>& lifetime_reproduction);

}  // namespace cullcast::network
