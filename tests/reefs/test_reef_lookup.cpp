// The raster look-up index against independent references: GDAL/GEOS
// OGRGeometry::Contains for membership, GeographicLib for buffer distances.
#include <catch2/catch.hpp>

#include <GeographicLib/Geodesic.hpp>

#include <cmath>
#include <limits>
#include <random>

#include "cullcast/reefs/reef_geometry.hpp"
#include "cullcast/reefs/reef_lookup.hpp"
#include "reef_test_support.hpp"

using namespace cullcast;
using namespace cullcast::reefs;
using namespace reef_test;

namespace {

ReefSet hand_made_reefs() {
  std::vector<Reef> reefs;
  // Concave star.
  reefs.push_back(make_reef("star", {Polygon{star(150.10, -20.10, 0.012, 37, 0.45, 5), {}}}));
  // Polygon with two holes.
  reefs.push_back(make_reef("atoll", {Polygon{star(150.16, -20.10, 0.015, 60, 0.1, 3),
                                              {star(150.155, -20.10, 0.004, 13, 0.2, 2, true),
                                               star(150.168, -20.10, 0.003, 11, 0.0, 1, true)}}}));
  // Multipolygon: a C shape and a small island part with a hole.
  reefs.push_back(make_reef(
      "pair", {Polygon{ring({{150.10, -20.16}, {150.13, -20.16}, {150.13, -20.155}, {150.105, -20.155},
                             {150.105, -20.135}, {150.13, -20.135}, {150.13, -20.13}, {150.10, -20.13}}),
                       {}},
               Polygon{star(150.118, -20.145, 0.006, 21, 0.2, 3), {star(150.118, -20.145, 0.002, 9, 0, 1, true)}}}));
  // Tiny reef (about 0.5 ha) next to a big one: sets the cell size.
  reefs.push_back(make_reef("tiny", {Polygon{star(150.20, -20.16, 0.0004, 9, 0.3, 2), {}}}));
  return ReefSet(std::move(reefs));
}

}  // namespace

TEST_CASE("reef_at agrees with GEOS Contains on random points (concave, holes, multipolygons)", "[reefs][lookup]") {
  // Reference: GDAL/GEOS OGRGeometry::Contains, an independent point-in-polygon implementation.
  const ReefSet set = hand_made_reefs();
  const ReefLookup lookup(set, 0.0);
  std::vector<std::unique_ptr<OGRGeometry>> shapes;
  for (const auto& r : set.reefs()) shapes.push_back(to_ogr(r));
  std::mt19937_64 gen(42);
  std::uniform_real_distribution<double> lon(150.08, 150.22), lat(-20.17, -20.08);
  int hits = 0;
  for (int i = 0; i < 60000; ++i) {
    const double x = lon(gen), y = lat(gen);
    OGRPoint p(x, y);
    int expected = -1;
    for (std::size_t k = 0; k < shapes.size() && expected < 0; ++k) {
      if (shapes[k]->Contains(&p)) expected = static_cast<int>(k);
    }
    const int got = lookup.reef_at(x, y);
    if (got != expected) {
      FAIL("point (" << x << ", " << y << "): lookup " << got << ", GEOS " << expected);
    }
    const bool plain = expected >= 0 && contains(set.reefs()[static_cast<std::size_t>(expected)], {x, y});
    if (expected >= 0 && !plain) FAIL("contains() disagrees with GEOS at (" << x << ", " << y << ")");
    hits += expected >= 0;
  }
  CHECK(hits > 3000);  // the test really samples reefs
  CHECK(lookup.edge_cell_count() > 0);
  CHECK(lookup.edge_cell_count() < lookup.cell_count() / 2);
  CHECK(lookup.memory_bytes() < 64u * 1024 * 1024);
  // Cell size set by the tiny reef: finer than the reef itself.
  CHECK(lookup.cell_size_m() < std::sqrt(set.reefs()[3].area_ha * 1e4));
}

TEST_CASE("reef_at on the demo layer agrees with GEOS Contains", "[reefs][lookup][gdal]") {
  study::ReefSettings s;
  s.layer = demo_dir() + "/reefs.geojson";
  const ReefSet set = ReefSet::load(s);
  const ReefLookup lookup(set, 0.0);
  std::vector<std::unique_ptr<OGRGeometry>> shapes;
  for (const auto& r : set.reefs()) shapes.push_back(to_ogr(r));
  std::mt19937_64 gen(3);
  std::uniform_real_distribution<double> lon(150.0, 150.6), lat(-20.4, -20.0);
  int mismatches = 0, hits = 0;
  for (int i = 0; i < 100000; ++i) {
    const double x = lon(gen), y = lat(gen);
    OGRPoint p(x, y);
    int expected = -1;
    for (std::size_t k = 0; k < shapes.size() && expected < 0; ++k) {
      if (x >= set.reefs()[k].lon_min && x <= set.reefs()[k].lon_max && shapes[k]->Contains(&p)) {
        expected = static_cast<int>(k);
      }
    }
    mismatches += lookup.reef_at(x, y) != expected;
    hits += expected >= 0;
  }
  CHECK(mismatches == 0);
  CHECK(hits > 500);
}

TEST_CASE("overlaps go to the lowest index, off-grid and NaN give -1", "[reefs][lookup]") {
  std::vector<Reef> reefs;
  reefs.push_back(make_reef("low", {Polygon{ring({{150.0, -20.0}, {150.02, -20.0}, {150.02, -19.98}, {150.0, -19.98}}), {}}}));
  reefs.push_back(make_reef("high", {Polygon{ring({{150.01, -20.0}, {150.03, -20.0}, {150.03, -19.98}, {150.01, -19.98}}), {}}}));
  const ReefSet set(std::move(reefs));
  for (double buffer : {0.0, 150.0}) {
    const ReefLookup lookup(set, buffer);
    CHECK(lookup.reef_at(150.015, -19.99) == 0);
    CHECK(lookup.reef_at(150.005, -19.99) == 0);
    CHECK(lookup.reef_at(150.025, -19.99) == 1);
    CHECK(lookup.reef_at(151.0, -19.99) == -1);
    CHECK(lookup.reef_at(std::numeric_limits<double>::quiet_NaN(), -19.99) == -1);
    CHECK(lookup.reef_at(150.015, std::numeric_limits<double>::infinity()) == -1);
  }
  const ReefLookup empty(ReefSet{}, 100.0);
  CHECK(empty.reef_at(150, -20) == -1);
}

TEST_CASE("may_hold_reef is false only for boxes where reef_at finds no reef", "[reefs][lookup]") {
  const ReefSet set = hand_made_reefs();
  for (double buffer : {0.0, 200.0}) {
    const ReefLookup lookup(set, buffer);
    std::mt19937_64 gen(11);
    std::uniform_real_distribution<double> lon(150.0, 150.3), lat(-20.25, -20.0), side(0.0, 0.02);
    int open = 0, held = 0;
    for (int k = 0; k < 4000; ++k) {
      const double x0 = lon(gen), y0 = lat(gen), x1 = x0 + side(gen), y1 = y0 + side(gen);
      const bool may = lookup.may_hold_reef(x0, x1, y0, y1);
      bool found = false;  // a 21 x 21 sample of the box, corners and edges included
      for (int a = 0; a <= 20 && !found; ++a) {
        for (int c = 0; c <= 20 && !found; ++c) {
          found = lookup.reef_at(x0 + (x1 - x0) * a / 20.0, y0 + (y1 - y0) * c / 20.0) >= 0;
        }
      }
      if (found) CHECK(may);
      held += found ? 1 : 0;
      open += may ? 0 : 1;
    }
    CHECK(held > 100);  // both kinds of box were drawn
    CHECK(open > 100);
    CHECK_FALSE(lookup.may_hold_reef(151.0, 151.1, -20.1, -20.0));  // east of every reef
    CHECK(lookup.may_hold_reef(150.0, 151.0, -21.0, -19.0));        // around all of them
  }
  const ReefLookup empty(ReefSet{}, 100.0);
  CHECK_FALSE(empty.may_hold_reef(150, 151, -21, -20));
  const ReefLookup a(hand_made_reefs(), 0.0), b(hand_made_reefs(), 0.0);
  const ReefLookup copy = a;
  CHECK(a.serial() != b.serial());
  CHECK(copy.serial() == a.serial());
}

TEST_CASE("buffer membership matches GeographicLib geodesic distance to the edge", "[reefs][lookup][buffer][slow]") {
  // Reference: inside (GEOS Contains) or WGS84 geodesic distance to the nearest
  // edge <= buffer, the distance from GeographicLib Inverse (Karney 2013)
  // minimised along each edge by golden-section search. Points within 0.5 m
  // of the buffer line are skipped: the documented accuracy of the local
  // metric is ~1e-3 relative (0.3 m at 300 m).
  std::vector<Reef> reefs;
  reefs.push_back(make_reef("s", {Polygon{star(150.10, -20.10, 0.008, 19, 0.4, 4), {}}}));
  reefs.push_back(make_reef("h", {Polygon{star(150.135, -20.10, 0.008, 25, 0.1, 3),
                                          {star(150.135, -20.10, 0.0045, 11, 0.0, 1, true)}}}));
  const ReefSet set(std::move(reefs));
  const double buffer_m = 300.0;
  const ReefLookup lookup(set, buffer_m);
  const auto& geod = GeographicLib::Geodesic::WGS84();
  auto edge_distance = [&](const Reef& r, LonLat p) {
    double best = 1e30;
    auto visit = [&](const Ring& ring) {
      for (std::size_t i = 0; i + 1 < ring.size(); ++i) {
        auto at = [&](double t) {
          double s = 0;
          geod.Inverse(p.lat, p.lon, ring[i].lat + t * (ring[i + 1].lat - ring[i].lat),
                       ring[i].lon + t * (ring[i + 1].lon - ring[i].lon), s);
          return s;
        };
        double lo = 0, hi = 1;
        for (int k = 0; k < 50; ++k) {
          const double m1 = lo + (hi - lo) * 0.381966, m2 = hi - (hi - lo) * 0.381966;
          if (at(m1) < at(m2)) hi = m2; else lo = m1;
        }
        best = std::min({best, at(0), at(1), at((lo + hi) / 2)});
      }
    };
    for (const auto& part : r.parts) {
      visit(part.outer);
      for (const auto& h : part.holes) visit(h);
    }
    return best;
  };
  std::vector<std::unique_ptr<OGRGeometry>> shapes;
  for (const auto& r : set.reefs()) shapes.push_back(to_ogr(r));
  std::mt19937_64 gen(11);
  std::uniform_real_distribution<double> lon(150.085, 150.15), lat(-20.115, -20.085);
  int checked = 0, in_buffer_only = 0;
  for (int i = 0; i < 1500; ++i) {
    const double x = lon(gen), y = lat(gen);
    OGRPoint p(x, y);
    int expected = -1;
    bool near_line = false;
    for (std::size_t k = 0; k < set.size() && expected < 0; ++k) {
      if (shapes[k]->Contains(&p)) {
        expected = static_cast<int>(k);
        break;
      }
      const double d = edge_distance(set.reefs()[k], {x, y});
      if (std::abs(d - buffer_m) < 0.5) near_line = true;
      if (d <= buffer_m) {
        expected = static_cast<int>(k);
        if (!near_line) ++in_buffer_only;
      }
    }
    if (near_line) continue;
    ++checked;
    const int got = lookup.reef_at(x, y);
    if (got != expected) FAIL("point (" << x << ", " << y << "): lookup " << got << ", reference " << expected);
  }
  CHECK(checked > 1400);
  CHECK(in_buffer_only > 100);  // the buffer band is really exercised
}
