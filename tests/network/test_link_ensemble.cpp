// Ensemble statistics per link across spawning events.
#include <catch2/catch.hpp>

#include "cullcast/network/connectivity_matrix.hpp"
#include "cullcast/network/link_ensemble.hpp"
#include "network_test_support.hpp"

using namespace cullcast::network;
using Catch::Detail::Approx;

TEST_CASE("invariant: ensemble of identical events equals the event") {
  const std::vector<std::vector<int>> s = {{100, 20, 0}, {50, 200, 10}, {0, 30, 40}};
  const auto c = build_connectivity(test::one_event(s, {1000, 1000, 1000}, 4), "mem");
  REQUIRE(c.events.size() == 4);
  const Ensemble e = link_ensemble(c, {0.1, 0.5, 0.9}, 0.95);
  CHECK(e.links.size() == 7);
  for (const auto& l : e.links) {
    const double p = c.events[0].probability.coeff(l.source, l.sink);
    CHECK(l.mean == Approx(p).epsilon(1e-14));
    CHECK(l.sd == Approx(0).margin(1e-15));
    CHECK(l.min == p);
    CHECK(l.max == p);
    for (double q : l.quantiles) CHECK(q == Approx(p));
    CHECK(l.pooled == Approx(p));
    CHECK(l.released == 4000);
  }
  CHECK((e.mean - c.events[0].probability).norm() < 1e-14);
}

TEST_CASE("ensemble: mean, sample sd, cv, quantiles of a hand-computed link") {
  // One source, one reef, 4 events with 10, 30, 20, 0 settlers of 100:
  // p = 0.1, 0.3, 0.2, 0 -> mean 0.15, sample sd sqrt(0.05/3) = 0.129099,
  // median (Hyndman & Fan 1996 def. 7, as numpy.quantile) 0.15, q0.25 = 0.075.
  auto d = test::one_event({{10}}, {100}, 4);
  d.records.clear();
  const int settlers[] = {10, 30, 20, 0};
  for (int e = 0; e < 4; ++e) {
    for (int k = 0; k < settlers[e]; ++k) d.records.push_back({static_cast<std::uint32_t>(e), 0, 0, 0, 0, 0, 1});
    d.fates[e].settled = settlers[e];
  }
  const auto c = build_connectivity(d, "mem");
  const Ensemble e = link_ensemble(c, {0.25, 0.5, 1.0}, 0.95);
  REQUIRE(e.links.size() == 1);
  const auto& l = e.links[0];
  CHECK(l.mean == Approx(0.15));
  CHECK(l.sd == Approx(0.1290994449));
  CHECK(l.cv == Approx(0.1290994449 / 0.15));
  CHECK(l.min == 0);
  CHECK(l.max == Approx(0.3));
  CHECK(l.quantiles[0] == Approx(0.075));
  CHECK(l.quantiles[1] == Approx(0.15));
  CHECK(l.quantiles[2] == Approx(0.3));
  CHECK(l.count == 60);
  CHECK(l.pooled == Approx(60.0 / 400));
  CHECK(l.wilson_low < l.pooled);
  CHECK(l.wilson_high > l.pooled);
}
