// Matrices from settlement records, orientation, invariants, input errors.
#include <catch2/catch.hpp>

#include "cullcast/base/error.hpp"
#include "cullcast/network/connectivity_matrix.hpp"
#include "cullcast/network/reef_metrics.hpp"
#include "network_test_support.hpp"

using namespace cullcast::network;
using Catch::Detail::Approx;

namespace {

// Worked example of /work/shared/REFERENCES.md §4 (derived from the
// definitions of Botsford et al. 2009, Coral Reefs 28:327-337): settlers given
// there with row = DESTINATION, column = source:
//   [[100,50,0],[20,200,30],[0,10,40]]; here transposed to row = source.
const std::vector<std::vector<int>> kSettlersBySource = {{100, 20, 0}, {50, 200, 10}, {0, 30, 40}};

}  // namespace

TEST_CASE("probability matrix: row = source, column = sink") {
  const auto c = build_connectivity(test::one_event(kSettlersBySource, {1000, 1000, 1000}), "mem");
  REQUIRE(c.events.size() == 1);
  const auto& m = c.events[0];
  CHECK(m.count.coeff(0, 1) == 20);   // 20 larvae from reef 0 settled on reef 1
  CHECK(m.count.coeff(1, 0) == 50);
  CHECK(m.probability.coeff(2, 1) == Approx(0.03));
  CHECK(m.probability.coeff(0, 2) == 0);
  const auto success = row_sums(m.probability);
  CHECK(success[0] == Approx(0.12));
  CHECK(success[1] == Approx(0.26));
  CHECK(success[2] == Approx(0.07));
}

TEST_CASE("local retention, self-recruitment, success: REFERENCES §4 worked example") {
  // Expected LR = [0.10, 0.20, 0.04], SR = [0.667, 0.80, 0.80],
  // success = [0.12, 0.26, 0.07] (Botsford et al. 2009 definitions).
  const auto c = build_connectivity(test::one_event(kSettlersBySource, {1000, 1000, 1000}), "mem");
  const auto metrics = reef_metrics(reef_probability(c, 0), {1, 1, 1}, {});
  CHECK(metrics[0].local_retention == Approx(0.10));
  CHECK(metrics[1].local_retention == Approx(0.20));
  CHECK(metrics[2].local_retention == Approx(0.04));
  CHECK(metrics[0].self_recruitment == Approx(100.0 / 150.0));
  CHECK(metrics[1].self_recruitment == Approx(0.80));
  CHECK(metrics[2].self_recruitment == Approx(0.80));
  CHECK(metrics[0].settlement_success == Approx(0.12));
  CHECK(metrics[1].settlement_success == Approx(0.26));
  CHECK(metrics[2].settlement_success == Approx(0.07));
  // Export/import with equal outputs L = 1 (larvae per released larva):
  // reef 1 exports 0.05 + 0.01 and imports 0.02 + 0.03.
  CHECK(metrics[1].export_strength == Approx(0.06));
  CHECK(metrics[1].import_strength == Approx(0.05));
  CHECK(metrics[1].role == "exchange");
}

TEST_CASE("self-recruitment weights settlers by larval output") {
  // With unequal releases, SR from realised larvae L_k P_ki equals SR from raw
  // settler counts when L_k = released_k (definition, Botsford et al. 2009).
  const auto c = build_connectivity(test::one_event(kSettlersBySource, {1000, 500, 2000}), "mem");
  const auto metrics = reef_metrics(reef_probability(c, 0), {1000, 500, 2000}, {});
  CHECK(metrics[0].self_recruitment == Approx(100.0 / 150.0));
  CHECK(metrics[1].self_recruitment == Approx(200.0 / 250.0));
  CHECK(metrics[1].local_retention == Approx(200.0 / 500.0));
}

TEST_CASE("realised matrix scales each source row by its output") {
  const auto c = build_connectivity(test::one_event(kSettlersBySource, {1000, 1000, 1000}), "mem");
  const SparseMatrix r = realised_matrix(c.events[0].probability, {10, 0, 2});
  CHECK(r.coeff(0, 0) == Approx(1.0));
  CHECK(r.coeff(1, 1) == 0);
  CHECK(r.coeff(2, 2) == Approx(0.08));
  CHECK_THROWS(realised_matrix(c.events[0].probability, {1, 2}));
}

TEST_CASE("invariant: every row of P sums to at most 1") {
  // Random settlement with every fate: rows must stay sub-stochastic.
  std::mt19937 gen(11);
  std::uniform_int_distribution<int> u(0, 30);
  std::vector<std::vector<int>> s(40, std::vector<int>(40));
  std::vector<std::int64_t> released(40);
  for (int i = 0; i < 40; ++i) {
    std::int64_t total = 0;
    for (int j = 0; j < 40; ++j) total += (s[i][j] = (u(gen) > 25 ? u(gen) : 0));
    released[i] = total + u(gen);
  }
  const auto c = build_connectivity(test::one_event(s, released), "mem");
  for (double sum : row_sums(c.events[0].probability)) CHECK(sum <= 1.0 + 1e-12);
}

TEST_CASE("aggregation sources: extra rows, kept out of the reef matrix") {
  auto d = test::one_event({{10, 0}, {0, 20}}, {100, 100});
  d.tables.source_ids.push_back("AGG-1");
  d.tables.source_kinds.push_back(1);
  d.tables.source_reefs.push_back(1);
  d.fates.push_back({});
  d.fates.back().released = 50;
  d.records.push_back({0, 2, 0, 0, 0, 0, 1.0});
  const auto c = build_connectivity(d, "mem");
  CHECK(c.events[0].probability.rows() == 3);
  CHECK(c.events[0].probability.coeff(2, 0) == Approx(1.0 / 50));
  const SparseMatrix p = reef_probability(c, 0);
  CHECK(p.rows() == 2);
  CHECK(p.coeff(1, 0) == 0);  // the aggregation's larvae are not reef 1's row
  CHECK(reef_output(c, {3, 4, 5}) == std::vector<double>{3, 4});
}

TEST_CASE("bad settlement data is an InputError naming the file and the problem") {
  auto d = test::one_event({{10, 0}, {0, 20}}, {100, 100});
  d.records.push_back({0, 0, 5, 0, 0, 0, 1.0});
  CHECK_THROWS_WITH(build_connectivity(d, "out/settlement.nc"),
                    Catch::Contains("out/settlement.nc: settlement record 30") &&
                        Catch::Contains("points outside the tables"));
  auto e = test::one_event({{10, 0}, {0, 20}}, {5, 100});
  CHECK_THROWS_AS(build_connectivity(e, "f.nc"), cullcast::InputError);
  CHECK_THROWS_WITH(build_connectivity(e, "f.nc"), Catch::Contains("'released' is 5"));
  auto f = test::one_event({{1}}, {10});
  f.tables.source_reefs[0] = 3;
  CHECK_THROWS_WITH(build_connectivity(f, "f.nc"), Catch::Contains("'source_reef'"));
}
