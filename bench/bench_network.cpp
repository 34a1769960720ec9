// Network stage at scale: a synthetic reef network (invented, random links to
// nearby reefs along a coast), timing metrics, persistence and attribution.
// Sample run: build/bench_network 3000 30
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <random>

#include "bench_args.hpp"
#include "cullcast/network/network_graph.hpp"
#include "cullcast/network/persistence.hpp"
#include "cullcast/network/reef_metrics.hpp"

using namespace cullcast::network;

int main(int argc, char** argv) {
  constexpr const char* kUsage = "bench_network [reefs=3000] [links_per_source=30]";
  cullcast::bench::help_if_asked(argc, argv, kUsage);
  const int n = static_cast<int>(cullcast::bench::number_arg(argc, argv, 1, 3000, 2, 1e6, kUsage));
  const int links = static_cast<int>(cullcast::bench::number_arg(argc, argv, 2, 30, 1, 1e4, kUsage));
  std::mt19937 gen(1);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  std::vector<Eigen::Triplet<double>> t;
  for (int i = 0; i < n; ++i) {
    for (int k = 0; k < links; ++k) {
      const int j = std::clamp(i + static_cast<int>((u(gen) - 0.3) * 4 * links), 0, n - 1);
      t.emplace_back(i, j, 0.3 * u(gen) / links);
    }
  }
  SparseMatrix p(n, n);
  p.setFromTriplets(t.begin(), t.end());
  const auto clock = [] { return std::chrono::steady_clock::now(); };
  const auto seconds = [](auto a, auto b) { return std::chrono::duration<double>(b - a).count(); };
  auto t0 = clock();
  const auto metrics = reef_metrics(p, std::vector<double>(n, 1.0), {1e-3, 3});
  auto t1 = clock();
  const auto lambda = dominant_eigenvalue(p);
  auto t2 = clock();
  std::printf("%d reefs, %ld links: metrics %.2f s, eigenvalue %.4f (%s) %.2f s\n", n,
              static_cast<long>(p.nonZeros()), seconds(t0, t1), lambda.value, lambda.method.c_str(),
              seconds(t1, t2));
  return metrics.empty() ? 1 : 0;
}
