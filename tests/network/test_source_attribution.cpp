// Source attribution by Bayes' rule over a connectivity column.
#include <catch2/catch.hpp>

#include "cullcast/base/error.hpp"
#include "cullcast/network/source_attribution.hpp"
#include "network_test_support.hpp"

using namespace cullcast::network;
using Catch::Detail::Approx;

TEST_CASE("attribution: hand-computed posterior over a column") {
  // Column 1 (sink R-1) of the REFERENCES §4 example, row = source:
  // P_01 = 0.02, P_11 = 0.20, P_21 = 0.03. With outputs L = (10, 1, 2):
  // weights 0.2, 0.2, 0.06 -> shares 0.4348, 0.4348, 0.1304 (Bayes' rule).
  const auto c = build_connectivity(
      test::one_event({{100, 20, 0}, {50, 200, 10}, {0, 30, 40}}, {1000, 1000, 1000}), "mem");
  const Attribution a = attribute_sink(c, "R-1", {10, 1, 2});
  REQUIRE(a.origins.size() == 3);
  CHECK(a.sink == 1);
  CHECK(a.events_with_settlers == 1);
  CHECK(a.origins[0].share == Approx(0.2 / 0.46));
  CHECK(a.origins[2].source == 2);
  CHECK(a.origins[2].share == Approx(0.06 / 0.46));
  double total = 0;
  for (const auto& o : a.origins) total += o.share;
  CHECK(total == Approx(1.0));
  // Equal outputs: the column normalised. Reef 0 receives only from 0 and 1.
  const Attribution b = attribute_sink(c, "R-0", {1, 1, 1});
  REQUIRE(b.origins.size() == 2);
  CHECK(b.origins[0].source == 0);
  CHECK(b.origins[0].share == Approx(100.0 / 150.0));
}

TEST_CASE("attribution: spread across events and unknown ids") {
  // Event 1: sink 1 gets 10 from source 0 and 10 from source 1; event 2:
  // 30 from source 0 only. Per-event shares of source 0: 0.5 and 1.0.
  auto d = test::one_event({{0, 10}, {0, 10}}, {100, 100}, 2);
  d.records.erase(d.records.begin() + 20, d.records.end());  // drop event 2's records
  for (int k = 0; k < 30; ++k) d.records.push_back({1, 0, 1, 0, 0, 0, 1});
  const auto c = build_connectivity(d, "mem");
  const Attribution a = attribute_sink(c, "R-1", {1, 1});
  REQUIRE(a.origins.size() == 2);
  CHECK(a.origins[0].source == 0);
  CHECK(a.origins[0].share == Approx(40.0 / 50.0));  // from the mean matrix
  CHECK(a.origins[0].event_mean == Approx(0.75));
  CHECK(a.origins[0].event_min == Approx(0.5));
  CHECK(a.origins[0].event_max == Approx(1.0));
  CHECK(a.origins[0].event_sd == Approx(std::sqrt(0.125)));
  CHECK_THROWS_AS(attribute_sink(c, "R-9", {1, 1}), cullcast::InputError);
}
