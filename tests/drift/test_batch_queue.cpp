// The queued tail of a shared drift: where it starts and how it is cut into
// chunks (no MPI; the mpirun checks are in tests/mpi/run_mpi_drift.py, the
// in-process run with queued chunks in test_drift_run.cpp).
#include <catch2/catch.hpp>

#include <stdexcept>

#include "../support/release_batches.hpp"
#include "cullcast/drift/batch_queue.hpp"

using namespace cullcast::drift;
using cullcast::test::batches_of;
using cullcast::test::cost_of;

TEST_CASE("queue_start: the first batch after the static share of the estimated cost", "[drift][share]") {
  // Costs 10, 30, 20, 40, 100 particle-steps x 10: total 2000.
  const auto b = batches_of({1, 3, 2, 4, 10}, 5);
  CHECK(queue_start(b, 0.0) == 0);
  CHECK(queue_start(b, 1.0) == 5);
  CHECK(queue_start(b, 0.05) == 1);  // 100 >= 100
  CHECK(queue_start(b, 0.06) == 2);  // 100 < 120 <= 400
  CHECK(queue_start(b, 0.5) == 4);   // the first four hold 1000 of 2000: exactly half
  CHECK(queue_start(b, 0.49) == 4);
  CHECK(queue_start(b, 0.51) == 5);
  CHECK(queue_start(b, 0.75) == 5);
  CHECK(queue_start({}, 0.5) == 0);
  CHECK_THROWS_AS(queue_start(b, 1.5), std::invalid_argument);
  CHECK_THROWS_AS(queue_start(b, -0.1), std::invalid_argument);
}

TEST_CASE("BatchQueue: chunks of remaining cost / (2 x processes), by hand", "[drift][share]") {
  // One event of 8 equal batches (cost 10 each), 2 processes: the targets
  // are 80/4 = 20 (2 batches), then 60/4 = 15, 50/4 = 12.5, 40/4 = 10 (1
  // batch each: a second would exceed them), then 30/4 and less: at least one.
  BatchQueue q(batches_of({1, 1, 1, 1, 1, 1, 1, 1}, 8), 0, 2);
  using Range = std::pair<std::size_t, std::size_t>;
  std::vector<Range> got;
  while (const auto c = q.take()) got.push_back(*c);
  CHECK(got == std::vector<Range>{{0, 2}, {2, 3}, {3, 4}, {4, 5}, {5, 6}, {6, 7}, {7, 8}});
  CHECK(q.batches_left() == 0);
  CHECK(q.cost_left() == 0.0);
  CHECK(!q.take());

  // 1 process and a larger tail: 16 equal batches from batch 4 on. Targets
  // 120/2 = 60 (6 batches), 60/2 = 30 (3), 30/2 = 15 (1), 20/2 = 10 (1), then 1 each.
  BatchQueue one(batches_of(std::vector<std::uint64_t>(16, 1), 16), 4, 1);
  got.clear();
  while (const auto c = one.take()) got.push_back(*c);
  CHECK(got == std::vector<Range>{{4, 10}, {10, 13}, {13, 14}, {14, 15}, {15, 16}});
}

TEST_CASE("BatchQueue: chunks no smaller than the floor while the event has enough", "[drift][share]") {
  // Two events of 8 equal batches (cost 10 each), 2 processes, floor 30: the
  // targets are max(160/4, 30) = 40 (4 batches), max(120/4, 30) = 30 (3),
  // then the event's last batch alone (the floor never crosses an event);
  // event 2: max(80/4, 30) = 30 (3), max(50/4, 30) = 30 (3), then the last 2.
  BatchQueue q(batches_of(std::vector<std::uint64_t>(16, 1), 8), 0, 2, 30.0);
  using Range = std::pair<std::size_t, std::size_t>;
  std::vector<Range> got;
  while (const auto c = q.take()) got.push_back(*c);
  CHECK(got == std::vector<Range>{{0, 4}, {4, 7}, {7, 8}, {8, 11}, {11, 14}, {14, 16}});
}

TEST_CASE("BatchQueue: chunks cover the tail once, in order, never across an event", "[drift][share]") {
  // Uneven costs over 5 events of 7 sources; 3 processes; the tail from batch 9.
  std::vector<std::uint64_t> particles;
  for (std::uint64_t i = 0; i < 35; ++i) particles.push_back(1 + (i * 37) % 23);
  const auto b = batches_of(particles, 7);
  BatchQueue q(b, 9, 3);
  CHECK(q.batches_left() == 26);
  CHECK(q.cost_left() == cost_of(b, 9, 35));
  std::size_t next = 9, chunks = 0;
  while (true) {
    const double before = q.cost_left();
    const auto c = q.take();
    if (!c) break;
    ++chunks;
    INFO("chunk " << c->first << ".." << c->second);
    CHECK(c->first == next);  // contiguous, in order
    REQUIRE(c->second > c->first);
    for (std::size_t i = c->first; i < c->second; ++i) CHECK(b[i].event == b[c->first].event);
    const double target = before / 6.0;
    // Within the target unless a single batch, and as long as the target,
    // the end of the event or the end of the list allow.
    if (c->second - c->first > 1) CHECK(cost_of(b, c->first, c->second) <= target);
    if (c->second < b.size() && b[c->second].event == b[c->first].event) {
      CHECK(cost_of(b, c->first, c->second + 1) > target);
    }
    CHECK(q.cost_left() == before - cost_of(b, c->first, c->second));
    next = c->second;
  }
  CHECK(next == b.size());
  CHECK(chunks >= 4);  // the tail spans 4 events
  CHECK(chunks < 26);  // some chunks hold several batches
}

TEST_CASE("BatchQueue: a tail that starts past the end is empty", "[drift][share]") {
  BatchQueue q(batches_of({1, 2, 3}, 3), 7, 2);
  CHECK(q.batches_left() == 0);
  CHECK(!q.take());
}
