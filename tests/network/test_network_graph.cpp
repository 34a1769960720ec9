// Graph metrics against brute-force oracles and closed forms.
#include <catch2/catch.hpp>

#include <cmath>
#include <functional>
#include <limits>
#include <set>

#include "cullcast/network/network_graph.hpp"
#include "network_test_support.hpp"

using namespace cullcast::network;
using Catch::Detail::Approx;

namespace {

using Dense = std::vector<std::vector<double>>;

Dense to_dense(const SparseMatrix& p) {
  Dense a(p.rows(), std::vector<double>(p.cols(), 0.0));
  for (Eigen::Index i = 0; i < p.outerSize(); ++i) {
    for (SparseMatrix::InnerIterator it(p, i); it; ++it) a[i][it.col()] = it.value();
  }
  return a;
}

// Brute force betweenness (definition: Freeman 1977, Sociometry 40:35-41):
// Floyd-Warshall distances, path counts sigma by relaxation in distance order,
// then B(v) = sum_{s != v != t} sigma_sv sigma_vt / sigma_st over pairs with
// d(s,v) + d(v,t) = d(s,t). Lengths are -ln p; `tol` absorbs rounding.
std::vector<double> brute_betweenness(const Dense& a, double threshold, double tol) {
  const std::size_t n = a.size();
  const double inf = std::numeric_limits<double>::infinity();
  Dense w(n, std::vector<double>(n, inf)), d(n, std::vector<double>(n, inf));
  for (std::size_t i = 0; i < n; ++i) {
    d[i][i] = 0;
    for (std::size_t j = 0; j < n; ++j) {
      if (i != j && a[i][j] > 0 && a[i][j] >= threshold) d[i][j] = w[i][j] = -std::log(a[i][j]);
    }
  }
  for (std::size_t k = 0; k < n; ++k)
    for (std::size_t i = 0; i < n; ++i)
      for (std::size_t j = 0; j < n; ++j) d[i][j] = std::min(d[i][j], d[i][k] + d[k][j]);
  // sigma[s][t]: number of shortest s->t paths, counted over vertices in order of d[s][.].
  std::vector<std::vector<double>> sigma(n, std::vector<double>(n, 0.0));
  for (std::size_t s = 0; s < n; ++s) {
    std::vector<std::size_t> order;
    for (std::size_t v = 0; v < n; ++v) if (d[s][v] < inf) order.push_back(v);
    std::sort(order.begin(), order.end(), [&](auto x, auto y) { return d[s][x] < d[s][y]; });
    sigma[s][s] = 1;
    for (std::size_t t : order) {
      if (t == s) continue;
      for (std::size_t u : order) {
        if (u != t && w[u][t] < inf && std::abs(d[s][u] + w[u][t] - d[s][t]) <= tol) sigma[s][t] += sigma[s][u];
      }
    }
  }
  std::vector<double> b(n, 0.0);
  for (std::size_t s = 0; s < n; ++s)
    for (std::size_t t = 0; t < n; ++t) {
      if (s == t || d[s][t] == inf) continue;
      for (std::size_t v = 0; v < n; ++v) {
        if (v == s || v == t) continue;
        if (std::abs(d[s][v] + d[v][t] - d[s][t]) <= tol) b[v] += sigma[s][v] * sigma[v][t] / sigma[s][t];
      }
    }
  return b;
}

// Reachability closure (Warshall 1962, J. ACM 9:11-12) over links >= threshold.
std::vector<std::vector<bool>> closure(const Dense& a, double threshold) {
  const std::size_t n = a.size();
  std::vector<std::vector<bool>> r(n, std::vector<bool>(n, false));
  for (std::size_t i = 0; i < n; ++i) {
    r[i][i] = true;
    for (std::size_t j = 0; j < n; ++j) if (a[i][j] > 0 && a[i][j] >= threshold) r[i][j] = true;
  }
  for (std::size_t k = 0; k < n; ++k)
    for (std::size_t i = 0; i < n; ++i)
      for (std::size_t j = 0; j < n; ++j) r[i][j] = r[i][j] || (r[i][k] && r[k][j]);
  return r;
}

}  // namespace

TEST_CASE("betweenness of a directed chain is (k-1)(n-k)") {
  // Closed form [D] in /work/shared/REFERENCES.md §4: node k (1-based) of a
  // directed chain 1 -> 2 -> ... -> n lies on every path from the k-1 nodes
  // before it to the n-k nodes after it.
  const int n = 9;
  Dense a(n, std::vector<double>(n, 0.0));
  for (int i = 0; i + 1 < n; ++i) a[i][i + 1] = 0.3;
  const auto b = betweenness(test::from_dense(a), 1e-3);
  for (int k = 1; k <= n; ++k) CHECK(b[k - 1] == Approx((k - 1) * (n - k)));
}

TEST_CASE("betweenness equals a brute-force all-pairs shortest-path count") {
  for (std::uint32_t seed : {1u, 2u, 3u, 4u}) {
    const SparseMatrix p = test::random_matrix(14, 0.3, 0.9, seed);
    const double threshold = 0.01;
    const auto fast = betweenness(p, threshold);
    const auto slow = brute_betweenness(to_dense(p), threshold, 1e-9);
    for (std::size_t v = 0; v < fast.size(); ++v) CHECK(fast[v] == Approx(slow[v]).margin(1e-9));
  }
  // Equal probabilities: many tied shortest paths (lengths k ln 2 summed the
  // same way), which tests the path counting, not just the distances.
  Dense a(10, std::vector<double>(10, 0.0));
  std::mt19937 gen(5);
  for (int i = 0; i < 10; ++i)
    for (int j = 0; j < 10; ++j) if (i != j && gen() % 4 == 0) a[i][j] = 0.05;
  const auto fast = betweenness(test::from_dense(a), 1e-3);
  const auto slow = brute_betweenness(a, 1e-3, 1e-12);
  double total = 0;
  for (std::size_t v = 0; v < fast.size(); ++v) {
    CHECK(fast[v] == Approx(slow[v]).margin(1e-9));
    total += fast[v];
  }
  CHECK(total > 0);  // the oracle would pass vacuously on an empty graph
}

TEST_CASE("strong components equal mutual reachability in the closure") {
  for (std::uint32_t seed : {7u, 8u, 9u}) {
    const SparseMatrix p = test::random_matrix(25, 0.08, 0.9, seed);
    const double threshold = 0.02;
    const Components c = strong_components(p, threshold);
    const auto r = closure(to_dense(p), threshold);
    for (int i = 0; i < 25; ++i)
      for (int j = 0; j < 25; ++j) CHECK((c.component[i] == c.component[j]) == (r[i][j] && r[j][i]));
    int total = 0;
    for (int s : c.size) total += s;
    CHECK(total == 25);
  }
}

TEST_CASE("degrees count links at or above the threshold, self-links excluded") {
  const SparseMatrix p = test::from_dense({{0.5, 0.01, 0.002}, {0.1, 0.0, 0.0}, {0.3, 0.0009, 0.2}});
  CHECK(out_degree(p, 1e-3) == std::vector<int>{2, 1, 1});
  CHECK(in_degree(p, 1e-3) == std::vector<int>{2, 1, 1});
  CHECK(out_degree(p, 0.05) == std::vector<int>{0, 1, 1});
}

TEST_CASE("most probable path equals the best of all simple paths") {
  const SparseMatrix p = test::random_matrix(8, 0.35, 0.9, 21);
  const Dense a = to_dense(p);
  // Exhaustive search over simple paths (8 reefs: at most 8! orderings).
  for (int from = 0; from < 8; ++from) {
    for (int to = 0; to < 8; ++to) {
      if (from == to) continue;
      double best = 0;
      std::vector<bool> seen(8, false);
      std::function<void(int, double)> walk = [&](int v, double prob) {
        if (v == to) {
          best = std::max(best, prob);
          return;
        }
        seen[v] = true;
        for (int u = 0; u < 8; ++u) if (!seen[u] && u != v && a[v][u] > 0) walk(u, prob * a[v][u]);
        seen[v] = false;
      };
      walk(from, 1.0);
      const SteppingStonePath path = most_probable_path(p, from, to);
      CHECK(path.probability == Approx(best).epsilon(1e-12));
      if (best > 0) {
        REQUIRE(path.reefs.size() >= 2);
        CHECK(path.reefs.front() == from);
        CHECK(path.reefs.back() == to);
        double product = 1;
        for (std::size_t k = 0; k + 1 < path.reefs.size(); ++k) product *= a[path.reefs[k]][path.reefs[k + 1]];
        CHECK(product == Approx(best).epsilon(1e-12));
      } else {
        CHECK(path.reefs.empty());
      }
    }
  }
}

TEST_CASE("matrix power and k-generation reach agree with dense products") {
  const SparseMatrix p = test::random_matrix(30, 0.1, 0.8, 31);
  const Eigen::MatrixXd dense(p);
  const Eigen::MatrixXd cube = dense * dense * dense;
  CHECK((Eigen::MatrixXd(matrix_power(p, 3, 0.0)) - cube).cwiseAbs().maxCoeff() < 1e-15);
  const double threshold = 1e-3;
  const auto reach = generation_reach(p, 3, threshold);
  for (int i = 0; i < 30; ++i) {
    int count = 0;
    for (int j = 0; j < 30; ++j) if (j != i && cube(i, j) >= threshold) ++count;
    CHECK(reach[i] == count);
  }
  // A chain reaches exactly k reefs ahead in k generations (all links 0.5).
  Dense chain(6, std::vector<double>(6, 0.0));
  for (int i = 0; i + 1 < 6; ++i) chain[i][i + 1] = 0.5;
  CHECK(generation_reach(test::from_dense(chain), 2, 0.1) == std::vector<int>{1, 1, 1, 1, 0, 0});
}
