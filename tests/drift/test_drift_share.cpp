// Sharing a drift run between processes: the batch list, the split by cost
// and the merge of per-process outcomes (no MPI involved; the end-to-end
// check against a single-process run is in test_drift_run.cpp, the mpirun
// check in tests/mpi/).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <numeric>
#include <stdexcept>

#include "../support/release_batches.hpp"
#include "cullcast/drift/drift_share.hpp"

using namespace cullcast;
using namespace cullcast::drift;

namespace {

SettlementRecord record(std::uint32_t source, double settle_s) {
  SettlementRecord r;
  r.source = source;
  r.reef = 1;
  r.settle_time_s = settle_s;
  return r;
}

}  // namespace

TEST_CASE("list_batches: one batch per event and source, costed in particle-steps", "[drift][share]") {
  study::Study s;
  s.motion.dt_minutes = 30;
  s.larvae.precompetent_days = 0.5;
  s.larvae.competent_days = 1.0;
  s.spawning.resize(2);
  s.spawning[0].hours = 1.0;
  s.spawning[0].larvae_per_reef = 20;
  s.spawning[1].hours = 0.25;
  s.spawning[1].larvae_per_reef = 7;
  const auto b = list_batches(s, 3);
  REQUIRE(b.size() == 6);
  // Event 1: (1 h + 1.5 days) / 30 min = (3600 + 129600) / 1800 = 74 steps exactly.
  CHECK(b[0].steps == 74);
  // Event 2: (900 + 129600) / 1800 = 72.5, so 73 steps (the last one partial).
  CHECK(b[3].steps == 73);
  for (std::size_t i = 0; i < b.size(); ++i) {
    CHECK(b[i].event == i / 3);
    CHECK(b[i].source == i % 3);
  }
  CHECK(b[1].cost() == 20.0 * 74);
  CHECK(b[5].cost() == 7.0 * 73);
}

TEST_CASE("split_by_cost: contiguous parts covering every batch once, balanced within one batch", "[drift][share]") {
  // Uneven costs from a fixed linear congruential sequence (no hand-picked values).
  std::vector<std::uint64_t> particles;
  std::uint64_t x = 12345;
  for (int i = 0; i < 97; ++i) {
    x = (x * 6364136223846793005ull + 1442695040888963407ull);
    particles.push_back(1 + (x >> 33) % 1000);
  }
  const auto b = test::batches_of(particles, 4);
  const double total = test::cost_of(b, 0, b.size());
  double largest = 0;
  for (const auto& q : b) largest = std::max(largest, q.cost());
  for (std::size_t parts : {1u, 2u, 3u, 7u, 16u, 97u}) {
    INFO(parts << " parts");
    const auto cuts = split_by_cost(b, parts);
    REQUIRE(cuts.size() == parts + 1);
    CHECK(cuts.front() == 0);
    CHECK(cuts.back() == b.size());
    CHECK(std::is_sorted(cuts.begin(), cuts.end()));
    for (std::size_t k = 0; k < parts; ++k) {
      const double c = test::cost_of(b, cuts[k], cuts[k + 1]);
      CHECK(std::abs(c - total / static_cast<double>(parts)) <= largest);
    }
  }
}

TEST_CASE("split_by_cost: equal batches split evenly; more parts than batches leaves parts empty", "[drift][share]") {
  const auto b = test::batches_of({5, 5, 5, 5, 5, 5}, 4);
  CHECK(split_by_cost(b, 2) == std::vector<std::size_t>{0, 3, 6});
  CHECK(split_by_cost(b, 3) == std::vector<std::size_t>{0, 2, 4, 6});
  const auto many = split_by_cost(b, 8);
  REQUIRE(many.size() == 9);
  std::size_t empty = 0;
  for (std::size_t k = 0; k < 8; ++k) {
    CHECK(many[k + 1] - many[k] <= 1);
    empty += many[k + 1] == many[k];
  }
  CHECK(empty == 2);
  // One heavy batch among light ones (costs 10, 10, 100, 10; half = 65): the
  // boundaries around it lie at 20 and 120, and 20 is nearer.
  CHECK(split_by_cost(test::batches_of({1, 1, 10, 1}, 4), 2) == std::vector<std::size_t>{0, 2, 4});
  CHECK_THROWS_AS(split_by_cost(b, 0), std::invalid_argument);
}

TEST_CASE("DriftShare::of marks exactly the batches of a part", "[drift][share]") {
  const auto b = test::batches_of({1, 1, 1, 1, 1, 1, 1, 1}, 4);  // 2 events x 4 sources
  const DriftShare share = DriftShare::of(b, 3, 6, 2, 4);
  CHECK(share.sources_of(0, 4) == std::vector<std::uint32_t>{3});
  CHECK(share.sources_of(1, 4) == std::vector<std::uint32_t>{0, 1});
  CHECK(DriftShare{}.sources_of(1, 4) == std::vector<std::uint32_t>{0, 1, 2, 3});  // default: all
  CHECK_THROWS_AS(DriftShare::of(b, 0, 8, 1, 4), std::invalid_argument);
}

TEST_CASE("merge_outcome keeps the single-process order: step, then source, then particle", "[drift][share]") {
  // Process A drifted sources 0 and 2, process B source 1.
  EventOutcome a, b;
  a.fates.resize(3);
  b.fates.resize(3);
  auto add = [](EventOutcome& o, std::uint32_t step, std::uint32_t source, std::uint32_t particle) {
    o.records.push_back(record(source, step * 100.0 + source + particle / 1000.0));
    o.record_keys.push_back((std::uint64_t{step} << 32) | particle);
  };
  add(a, 3, 0, 9);
  add(a, 3, 2, 1);
  add(a, 5, 0, 2);
  add(b, 2, 1, 4);
  add(b, 3, 1, 0);
  add(b, 3, 1, 7);
  add(b, 6, 1, 1);
  a.fates[0] = {10, 2, 0, 0, 8, 0, 1.5};
  a.fates[2] = {10, 1, 0, 0, 9, 0, 0.25};
  b.fates[1] = {10, 4, 1, 0, 5, 0, 3.0};
  a.particle_steps = 100;
  b.particle_steps = 40;
  a.max_speed_m_s = 0.5;
  b.max_speed_m_s = 0.7;
  b.off_water = 2;
  merge_outcome(a, b);
  std::vector<std::pair<std::uint32_t, std::uint32_t>> order;  // (step, source)
  for (std::size_t i = 0; i < a.records.size(); ++i) {
    order.emplace_back(static_cast<std::uint32_t>(a.record_keys[i] >> 32), a.records[i].source);
  }
  CHECK(order == std::vector<std::pair<std::uint32_t, std::uint32_t>>{
                     {2, 1}, {3, 0}, {3, 1}, {3, 1}, {3, 2}, {5, 0}, {6, 1}});
  CHECK((a.record_keys[2] & 0xFFFFFFFFu) == 0);  // source 1's particles 0 then 7
  CHECK((a.record_keys[3] & 0xFFFFFFFFu) == 7);
  CHECK(a.fates[1].settled == 4);
  CHECK(a.fates[1].settled_weight == 3.0);
  CHECK(a.fates[0].lost == 8);
  CHECK(a.particle_steps == 140);
  CHECK(a.max_speed_m_s == 0.7);
  CHECK(a.off_water == 2);

  EventOutcome twice = b;
  CHECK_THROWS_AS(merge_outcome(twice, b), std::logic_error);  // the same larva in two processes
  EventOutcome fewer;
  fewer.fates.resize(2);
  CHECK_THROWS_AS(merge_outcome(fewer, b), std::logic_error);
}
