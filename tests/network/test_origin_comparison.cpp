// Matrix attribution beside backward-drift origins: the comparison measures
// on a hand-made case, and the reader's refusals.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>

#include "cullcast/base/error.hpp"
#include "cullcast/network/origin_comparison.hpp"

namespace fs = std::filesystem;
using namespace cullcast;

TEST_CASE("origin comparison: total variation distance and top-five overlap by hand") {
  network::Connectivity c;
  c.source_ids = {"A", "B", "C"};
  network::Attribution matrix;
  matrix.sink_id = "S";
  matrix.origins = {{0, 0.6, 0.6, 0, 0.5, 0.7}, {1, 0.4, 0.4, 0, 0.3, 0.5}};
  const std::vector<network::BackwardOrigin> backward = {{"A", 0.5}, {"C", 0.5}};
  const auto cmp = network::compare_origins(c, matrix, backward);
  // TV = ½(|0.6−0.5| + |0.4−0| + |0−0.5|) = 0.5 (definition: Levin, Peres &
  // Wilmer 2009, Markov Chains and Mixing Times, Prop. 4.2).
  CHECK(cmp.total_variation == Approx(0.5));
  CHECK(cmp.top5_shared == 1);  // A only
  REQUIRE(cmp.origins.size() == 3);
  CHECK(cmp.origins[0].origin_id == "A");
  CHECK(cmp.origins[0].matrix_event_min == 0.5);
  const auto same = network::compare_origins(c, matrix, {{"A", 0.6}, {"B", 0.4}});
  CHECK(same.total_variation == Approx(0.0).margin(1e-15));
  CHECK(same.top5_shared == 2);
}

TEST_CASE("backward_origins.csv: read, and refused clearly when malformed") {
  const fs::path file = fs::temp_directory_path() / "cullcast-test-backward-origins.csv";
  std::ofstream(file) << "# comment\nreef_id,weight_s,share\nA,100,0.25\nB,300,0.75\n";
  const auto rows = network::read_backward_origins(file);
  REQUIRE(rows.size() == 2);
  CHECK(rows[1].reef_id == "B");
  CHECK(rows[1].share == 0.75);
  std::ofstream(file) << "reef_id,weight_s,share\nA,100,lots\n";
  CHECK_THROWS_WITH(network::read_backward_origins(file),
                    Catch::Contains(file.string()) && Catch::Contains("line 2") && Catch::Contains("share"));
  std::ofstream(file) << "id,share\n";
  CHECK_THROWS_AS(network::read_backward_origins(file), InputError);
  fs::remove(file);
}
