// Dominant eigenvalue for metapopulation persistence (Hastings & Botsford 2006,
// PNAS 103:6067-6072): closed forms, Eigen's dense solver, circulant spectra.
#include <catch2/catch.hpp>

#include <cmath>

#include <Eigen/Eigenvalues>

#include "cullcast/network/persistence.hpp"
#include "network_test_support.hpp"

using namespace cullcast::network;
using Catch::Detail::Approx;

TEST_CASE("dominant eigenvalue: worked examples") {
  // Values [D] in /work/shared/REFERENCES.md §4, each the larger root of the
  // characteristic polynomial: [[.2,.6],[.9,.4]] -> (0.6 + sqrt(0.04 + 2.16))/2.
  struct Case {
    std::vector<std::vector<double>> a;
    double lambda;
  };
  const Case cases[] = {
      {{{0.5, 0.5}, {0.5, 0.5}}, 1.0},
      {{{0.2, 0.6}, {0.9, 0.4}}, (0.6 + std::sqrt(0.04 + 4 * 0.54)) / 2},
      {{{0.2, 0.3}, {0.5, 0.4}}, 0.7},
      {{{0.3, 0.2, 0}, {0.5, 0.4, 0.3}, {0.1, 0.6, 0.2}}, 0.864231},
  };
  CHECK(cases[1].lambda == Approx(1.041620).margin(1e-6));
  for (const auto& c : cases) {
    for (int limit : {300, 0}) {  // dense path and power-iteration path
      EigenOptions o;
      o.dense_limit = limit;
      const DominantEigen d = dominant_eigenvalue(test::from_dense(c.a), o);
      CHECK(d.value == Approx(c.lambda).margin(1e-6));
      CHECK(d.converged);
      CHECK(d.method == (limit > 0 ? "dense" : "power"));
    }
  }
}

TEST_CASE("two patches persist iff a12 a21 / ((1-a11)(1-a22)) > 1") {
  // Hastings & Botsford (2006): the loop criterion for two patches (with
  // a11, a22 < 1) is equivalent to lambda > 1.
  std::mt19937 gen(3);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  int persisting = 0;
  for (int k = 0; k < 200; ++k) {
    const double a11 = 0.9 * u(gen), a22 = 0.9 * u(gen), a12 = 1.5 * u(gen), a21 = 1.5 * u(gen);
    const double loop = a12 * a21 / ((1 - a11) * (1 - a22));
    if (std::abs(loop - 1) < 1e-6) continue;
    const double lambda = dominant_eigenvalue(test::from_dense({{a11, a12}, {a21, a22}})).value;
    CHECK((lambda > 1) == (loop > 1));
    persisting += loop > 1;
  }
  CHECK(persisting > 10);  // both outcomes exercised
  CHECK(persisting < 190);
}

TEST_CASE("dominant eigenvalue agrees with Eigen's dense EigenSolver") {
  for (std::uint32_t seed : {1u, 2u, 3u}) {
    const SparseMatrix p = test::random_matrix(60, 0.1, 1.0, seed);
    const SparseMatrix m = reproduction_scaled(p, std::vector<double>(60, 3.0));
    Eigen::EigenSolver<Eigen::MatrixXd> solver(Eigen::MatrixXd(m), false);
    const double reference = solver.eigenvalues().cwiseAbs().maxCoeff();
    for (int limit : {300, 0}) {
      EigenOptions o;
      o.dense_limit = limit;
      CHECK(dominant_eigenvalue(m, o).value == Approx(reference).epsilon(1e-8));
    }
  }
}

TEST_CASE("circulant matrices: eigenvalues sum_k c_k w^(jk) in closed form") {
  // Circulant spectrum: Davis (1979), "Circulant Matrices", Wiley, §3.2: the
  // eigenvalues of circ(c_0..c_{n-1}) are sum_k c_k exp(2 pi i j k / n).
  // A pure ring (c_1 = 0.9) has n eigenvalues of equal modulus 0.9: plain
  // power iteration would cycle; the shifted one must still find 0.9.
  const int n = 50;
  std::vector<std::vector<double>> ring(n, std::vector<double>(n, 0.0));
  for (int i = 0; i < n; ++i) ring[i][(i + 1) % n] = 0.9;
  EigenOptions power;
  power.dense_limit = 0;
  const DominantEigen d = dominant_eigenvalue(test::from_dense(ring), power);
  CHECK(d.value == Approx(0.9).epsilon(1e-8));
  CHECK(d.converged);
  CHECK(dominant_eigenvalue(test::from_dense(ring)).value == Approx(0.9).epsilon(1e-10));
  // A general non-negative circulant: spectral radius = |sum_k c_k| at j = 0;
  // check the whole closed-form spectrum against Eigen once, then ours.
  const std::vector<double> c = {0.1, 0.3, 0.0, 0.05, 0.2, 0.0, 0.15};
  const int m = static_cast<int>(c.size());
  std::vector<std::vector<double>> a(m, std::vector<double>(m));
  for (int i = 0; i < m; ++i)
    for (int j = 0; j < m; ++j) a[i][j] = c[(j - i + m) % m];
  Eigen::EigenSolver<Eigen::MatrixXd> solver(Eigen::MatrixXd(test::from_dense(a)), false);
  double largest_closed = 0;
  for (int j = 0; j < m; ++j) {
    std::complex<double> lambda = 0;
    for (int k = 0; k < m; ++k) lambda += c[k] * std::polar(1.0, 2 * M_PI * j * k / m);
    double nearest = 1e9;
    for (int k = 0; k < m; ++k) nearest = std::min(nearest, std::abs(solver.eigenvalues()[k] - lambda));
    CHECK(nearest < 1e-12);
    largest_closed = std::max(largest_closed, std::abs(lambda));
  }
  CHECK(dominant_eigenvalue(test::from_dense(a), power).value == Approx(largest_closed).epsilon(1e-9));
}

TEST_CASE("reducible networks: the largest block's eigenvalue, per component") {
  // Two separate rings (0.5 and 0.8) plus a reef feeding one of them.
  std::vector<std::vector<double>> a(5, std::vector<double>(5, 0.0));
  a[0][1] = 0.5;
  a[1][0] = 0.5;
  a[2][3] = 0.8;
  a[3][2] = 0.8;
  a[4][2] = 0.9;
  const DominantEigen d = dominant_eigenvalue(test::from_dense(a));
  CHECK(d.value == Approx(0.8));
  CHECK(d.component_value[d.component[0]] == Approx(0.5));
  CHECK(d.component_value[d.component[4]] == 0.0);
  // Uniform lifetime reproduction R scales lambda: persistence needs R > 1/0.8.
  CHECK(dominant_eigenvalue(reproduction_scaled(test::from_dense(a), std::vector<double>(5, 1.25))).value ==
        Approx(1.0));
}
