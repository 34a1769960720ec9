// Hastings & Botsford (2006), PNAS 103:6067-6072: persistence iff the dominant
// eigenvalue of the reproduction-scaled connectivity matrix exceeds 1.
#include "cullcast/network/persistence.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include <Eigen/Dense>
#include <Eigen/Eigenvalues>

#include "cullcast/network/network_graph.hpp"

namespace cullcast::network {
namespace {

double dense_spectral_radius(const Eigen::MatrixXd& a) {
  if (a.rows() == 1) return std::abs(a(0, 0));
  Eigen::EigenSolver<Eigen::MatrixXd> solver(a, false);
  if (solver.info() != Eigen::Success) throw std::runtime_error("EigenSolver did not converge");
  return solver.eigenvalues().cwiseAbs().maxCoeff();
}

// Power iteration on B = A + I for an irreducible non-negative block A:
// B is primitive, its Perron root is lambda(A) + 1 and strictly dominant.
double power_spectral_radius(const SparseMatrix& a, const EigenOptions& o, bool& converged) {
  const Eigen::Index n = a.rows();
  Eigen::VectorXd x = Eigen::VectorXd::Constant(n, 1.0 / static_cast<double>(n));
  double estimate = 0;
  for (int it = 0; it < o.max_iterations; ++it) {
    // Row-vector form x B: A's rows are sources, so x A moves mass source -> sink.
    Eigen::VectorXd y = (x.transpose() * a).transpose() + x;
    const double norm = y.sum();  // x >= 0 and sums to 1, so sum(xB) is the Rayleigh-type estimate
    if (!(norm > 0)) return 0.0;
    y /= norm;
    const double next = norm - 1.0;
    const double change = std::abs(next - estimate);
    x = std::move(y);
    if (it > 0 && change <= o.tolerance * std::max(1.0, std::abs(next))) {
      // The estimate changes slowly near the end; confirm with the residual too.
      const Eigen::VectorXd r = (x.transpose() * a).transpose() - next * x;
      if (r.lpNorm<1>() <= std::sqrt(o.tolerance) * std::max(1e-300, next)) return next;
    }
    estimate = next;
  }
  converged = false;
  return estimate;
}

}  // namespace

SparseMatrix reproduction_scaled(const SparseMatrix& p, const std::vector<double>& r) {
  return realised_matrix(p, r);
}

DominantEigen dominant_eigenvalue(const SparseMatrix& m, const EigenOptions& options) {
  if (m.rows() != m.cols()) throw std::invalid_argument("dominant_eigenvalue: matrix not square");
  for (Eigen::Index i = 0; i < m.outerSize(); ++i) {
    for (SparseMatrix::InnerIterator it(m, i); it; ++it) {
      if (it.value() < 0) throw std::invalid_argument("dominant_eigenvalue: negative entry");
    }
  }
  DominantEigen out;
  const Components c = strong_components(m, 0.0);
  out.component = c.component;
  out.component_value.assign(c.size.size(), 0.0);
  const std::size_t n = static_cast<std::size_t>(m.rows());
  // Local index of each reef within its component.
  std::vector<std::vector<int>> members(c.size.size());
  std::vector<int> local(n, 0);
  for (std::size_t v = 0; v < n; ++v) {
    local[v] = static_cast<int>(members[c.component[v]].size());
    members[c.component[v]].push_back(static_cast<int>(v));
  }
  bool used_dense = false, used_power = false;
  for (std::size_t k = 0; k < members.size(); ++k) {
    const auto& mem = members[k];
    const auto size = static_cast<Eigen::Index>(mem.size());
    std::vector<Eigen::Triplet<double>> t;
    for (int v : mem) {
      for (SparseMatrix::InnerIterator it(m, v); it; ++it) {
        if (c.component[it.col()] == static_cast<int>(k) && it.value() > 0) {
          t.emplace_back(local[v], local[it.col()], it.value());
        }
      }
    }
    if (t.empty()) continue;  // a single reef without self-loop: eigenvalue 0
    SparseMatrix block(size, size);
    block.setFromTriplets(t.begin(), t.end());
    if (size <= options.dense_limit) {
      out.component_value[k] = dense_spectral_radius(Eigen::MatrixXd(block));
      used_dense = true;
    } else {
      out.component_value[k] = power_spectral_radius(block, options, out.converged);
      used_power = true;
    }
  }
  out.value = out.component_value.empty()
                  ? 0.0
                  : *std::max_element(out.component_value.begin(), out.component_value.end());
  out.method = used_dense && used_power ? "dense+power" : used_power ? "power" : "dense";
  return out;
}

}  // namespace cullcast::network
