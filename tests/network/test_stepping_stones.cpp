#include <catch2/catch.hpp>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "cullcast/network/stepping_stones.hpp"

using namespace cullcast::network;

namespace {
SparseMatrix from_triplets(int n, const std::vector<Eigen::Triplet<double>>& t) {
  SparseMatrix m(n, n);
  m.setFromTriplets(t.begin(), t.end());
  return m;
}
}  // namespace

TEST_CASE("stepping-stone routes prefer the most probable chain over a weak direct link") {
  // Hand-computed (derived): 0→1→2 has 0.5·0.4 = 0.2 > direct 0→2 = 0.1;
  // 3 reaches 2 only through 0 (0.3·0.2 = 0.06); 4 cannot reach 2.
  const SparseMatrix p = from_triplets(5, {{0, 1, 0.5}, {1, 2, 0.4}, {0, 2, 0.1}, {3, 0, 0.3}, {2, 4, 0.9}});
  const auto routes = stepping_stone_routes(p, {2});
  REQUIRE(routes.size() == 3);
  CHECK(routes[0].from == 1);  // 0.4, sorted by probability
  CHECK(routes[0].probability == Approx(0.4));
  CHECK(routes[1].from == 0);
  CHECK(routes[1].probability == Approx(0.2));
  CHECK(routes[1].reefs == std::vector<int>{0, 1, 2});
  CHECK(routes[2].from == 3);
  CHECK(routes[2].probability == Approx(0.06));
  CHECK(routes[2].reefs == std::vector<int>{3, 0, 1, 2});

  const auto file = std::filesystem::temp_directory_path() / "cullcast-stones.csv";
  write_stepping_stones_csv(file, {"A", "B", "C", "D", "E"}, routes);
  std::ifstream in(file);
  std::stringstream text;
  text << in.rdbuf();
  CHECK(text.str().find("\"D\",\"C\",0.06,2,\"D > A > B > C\"") != std::string::npos);
  std::filesystem::remove(file);
}
