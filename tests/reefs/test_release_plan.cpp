// Release plans: uniform seeding (chi-square), lattice, aggregations, timing, determinism.
#include <catch2/catch.hpp>

#include <GeographicLib/Geodesic.hpp>
#include <GeographicLib/PolygonArea.hpp>

#include <cmath>
#include <map>

#include "cullcast/base/error.hpp"
#include "cullcast/reefs/reef_geometry.hpp"
#include "cullcast/reefs/release_plan.hpp"
#include "reef_test_support.hpp"

using namespace cullcast;
using namespace cullcast::reefs;
using namespace reef_test;

namespace {

ReleaseSource reef_source(int k, const std::string& id) {
  ReleaseSource s;
  s.id = id;
  s.reef_index = k;
  return s;
}

study::SpawningEvent event_with(int n, double hours = 0, double depth = 0) {
  study::SpawningEvent e;
  e.larvae_per_reef = n;
  e.hours = hours;
  e.depth_m = depth;
  return e;
}

double geodesic_area_m2(const Ring& r) {
  GeographicLib::PolygonArea poly(GeographicLib::Geodesic::WGS84());
  for (std::size_t i = 0; i + 1 < r.size(); ++i) poly.AddPoint(r[i].lat, r[i].lon);
  double p = 0, a = 0;
  poly.Compute(false, true, p, a);
  return std::abs(a);
}

}  // namespace

TEST_CASE("uniform placement is uniform by area on the sphere: chi-square over latitude bands", "[reefs][release]") {
  // A tall reef from 70 S to 20 S: equal latitude bands hold very unequal areas.
  // Expected share of band [p1, p2]: (sin p2 - sin p1) / (sin 20S - sin 70S), the
  // sphere's band area R^2 dlon (sin p2 - sin p1) (Snyder 1987, USGS PP 1395).
  // Test statistic: Pearson (1900), Phil. Mag. 50:157-175. Critical value for
  // 9 degrees of freedom at p = 0.001: 27.877 (scipy.stats.chi2.ppf(0.999, 9)).
  std::vector<LonLat> pts;
  for (int i = 0; i <= 50; ++i) pts.push_back({150.0, -70.0 + i});
  for (int i = 0; i <= 50; ++i) pts.push_back({150.5, -20.0 - i});
  const ReefSet set({make_reef("tall", {Polygon{ring({{150.0, -70.0}, {150.5, -70.0}, {150.5, -20.0}, {150.0, -20.0}}), {}}})});
  study::ReefSettings settings;
  const int n = 20000;
  const auto plan = plan_release(set, {reef_source(0, "tall")}, event_with(n), 0, settings, 99);
  REQUIRE(plan.size() == static_cast<std::size_t>(n));
  std::vector<double> observed(10, 0);
  for (const auto& p : plan) observed[static_cast<std::size_t>(std::min(9, static_cast<int>((p.lat + 70) / 5)))] += 1;
  auto s = [](double deg) { return std::sin(deg * M_PI / 180); };
  double chi2 = 0;
  for (int b = 0; b < 10; ++b) {
    const double expected = n * (s(-70 + 5 * (b + 1)) - s(-70 + 5 * b)) / (s(-20) - s(-70));
    chi2 += (observed[static_cast<std::size_t>(b)] - expected) * (observed[static_cast<std::size_t>(b)] - expected) / expected;
  }
  INFO("chi-square " << chi2);
  CHECK(chi2 < 27.877);
}

TEST_CASE("uniform placement inside a concave reef with a hole: chi-square over sub-areas", "[reefs][release]") {
  // The reef is an L of 0.01-degree squares minus one square (the hole); each
  // square is a sub-area with expected count proportional to its geodesic area
  // (GeographicLib PolygonArea). Pearson (1900); 11 squares, critical value for
  // 10 degrees of freedom at p = 0.001: 29.588 (scipy.stats.chi2.ppf(0.999, 10)).
  const double d = 0.01, lon0 = 150.0, lat0 = -20.05;
  // Squares (column, row) of a 4 x 4 block minus a 2 x 2 corner (the L) = 12 squares, minus the hole (1, 1).
  std::vector<std::pair<int, int>> squares;
  for (int c = 0; c < 4; ++c)
    for (int r = 0; r < 4; ++r)
      if (!(c >= 2 && r >= 2) && !(c == 1 && r == 1)) squares.push_back({c, r});
  auto xy = [&](double c, double r) { return LonLat{lon0 + c * d, lat0 + r * d}; };
  const Ring outer = ring({xy(0, 0), xy(4, 0), xy(4, 2), xy(2, 2), xy(2, 4), xy(0, 4)});
  const Ring hole = ring({xy(1, 1), xy(1, 2), xy(2, 2), xy(2, 1)});
  const ReefSet set({make_reef("L", {Polygon{outer, {hole}}})});
  const int n = 30000;
  study::ReefSettings settings;
  const auto plan = plan_release(set, {reef_source(0, "L")}, event_with(n), 0, settings, 5);
  std::map<std::pair<int, int>, double> observed;
  for (const auto& p : plan) {
    const std::pair<int, int> key{static_cast<int>((p.lon - lon0) / d), static_cast<int>((p.lat - lat0) / d)};
    REQUIRE(std::find(squares.begin(), squares.end(), key) != squares.end());  // never in the hole or the notch
    observed[key] += 1;
  }
  double total_area = 0;
  std::vector<double> areas;
  for (auto [c, r] : squares) {
    areas.push_back(geodesic_area_m2(ring({xy(c, r), xy(c + 1, r), xy(c + 1, r + 1), xy(c, r + 1)})));
    total_area += areas.back();
  }
  // Long geodesic edges (0.04 degree) bulge differently from the short ones of
  // the squares: the sums agree to ~2e-5, far below the statistical noise.
  CHECK(total_area / 1e4 == Approx(set.reefs()[0].area_ha).epsilon(1e-4));
  double chi2 = 0;
  for (std::size_t i = 0; i < squares.size(); ++i) {
    const double expected = n * areas[i] / total_area;
    chi2 += std::pow(observed[squares[i]] - expected, 2) / expected;
  }
  INFO("chi-square " << chi2 << " with " << squares.size() - 1 << " degrees of freedom");
  REQUIRE(squares.size() == 11);
  CHECK(chi2 < 29.588);
}

TEST_CASE("release plans are deterministic, ordered, timed and at the event depth", "[reefs][release]") {
  const ReefSet set({make_reef("a", {Polygon{star(150.1, -20.1, 0.01, 17, 0.4, 3), {}}}),
                     make_reef("b", {Polygon{star(150.2, -20.1, 0.005, 11, 0.2, 2), {}}})});
  const std::vector<ReleaseSource> sources{reef_source(0, "a"), reef_source(1, "b")};
  study::ReefSettings settings;
  const auto e = event_with(100, 4.0, 2.5);
  const auto p1 = plan_release(set, sources, e, 3, settings, 17);
  const auto p2 = plan_release(set, sources, e, 3, settings, 17);
  const auto p3 = plan_release(set, sources, e, 3, settings, 18);
  const auto p4 = plan_release(set, sources, e, 4, settings, 17);
  REQUIRE(p1.size() == 200);
  int differ_seed = 0, differ_event = 0;
  for (std::size_t i = 0; i < p1.size(); ++i) {
    CHECK(p1[i].lon == p2[i].lon);
    CHECK(p1[i].lat == p2[i].lat);
    differ_seed += p1[i].lon != p3[i].lon;
    differ_event += p1[i].lon != p4[i].lon;
    CHECK(p1[i].source == i / 100);
    CHECK(p1[i].particle == i % 100);
    CHECK(p1[i].depth_m == 2.5);
    CHECK(p1[i].release_offset_s == Approx(4.0 * 3600 * (i % 100) / 100.0));
    CHECK(contains(set.reefs()[p1[i].source], {p1[i].lon, p1[i].lat}));
  }
  CHECK(differ_seed == 200);
  CHECK(differ_event == 200);
  const auto at_start = plan_release(set, sources, event_with(10, 0.0), 0, settings, 1);
  for (const auto& p : at_start) CHECK(p.release_offset_s == 0);
}

TEST_CASE("lattice placement gives exactly N evenly spread points inside the reef", "[reefs][release]") {
  const ReefSet set({make_reef("c", {Polygon{star(150.1, -20.1, 0.01, 31, 0.45, 4), {star(150.1, -20.1, 0.003, 9, 0, 1, true)}}})});
  study::ReefSettings settings;
  settings.placement = "lattice";
  for (int n : {1, 7, 100, 1000}) {
    const auto plan = plan_release(set, {reef_source(0, "c")}, event_with(n), 0, settings, 1);
    REQUIRE(plan.size() == static_cast<std::size_t>(n));
    for (const auto& p : plan) CHECK(contains(set.reefs()[0], {p.lon, p.lat}));
    if (n == 1000) {
      // Evenly spread: nearest-neighbour spacing close to sqrt(area / n)
      // (common practice, no source: a square lattice has spacing exactly sqrt(A/n)).
      const double expected = std::sqrt(set.reefs()[0].area_ha * 1e4 / n);
      double sum = 0;
      for (std::size_t i = 0; i < plan.size(); ++i) {
        double best = 1e30;
        for (std::size_t j = 0; j < plan.size(); ++j) {
          if (i != j) best = std::min(best, geodesic_distance_m({plan[i].lon, plan[i].lat}, {plan[j].lon, plan[j].lat}));
        }
        sum += best;
      }
      CHECK(sum / n == Approx(expected).epsilon(0.2));
    }
  }
}

TEST_CASE("aggregation particles sit on the detections, shared by count", "[reefs][release]") {
  ReleaseSource agg;
  agg.id = "AGG-1";
  agg.kind = SourceKind::aggregation;
  agg.points = {{150.0, -20.0}, {150.001, -20.0}, {150.002, -20.0}};
  agg.point_weights = {6, 3, 1};
  const ReefSet set;
  study::ReefSettings settings;
  const auto plan = plan_release(set, {agg}, event_with(100), 0, settings, 1);
  std::map<double, int> per_point;
  for (const auto& p : plan) per_point[p.lon]++;
  CHECK(per_point[150.0] == 60);
  CHECK(per_point[150.001] == 30);
  CHECK(per_point[150.002] == 10);
  // Interleaved (round-robin), not in blocks: the first ten hold every point.
  std::map<double, int> first_ten;
  for (int i = 0; i < 10; ++i) first_ten[plan[static_cast<std::size_t>(i)].lon]++;
  CHECK(first_ten.size() == 3);
}

TEST_CASE("release_sources: reefs with density x area, then aggregations", "[reefs][release]") {
  const fs::path dir = scratch("sources");
  study::Study st;
  st.reefs.layer = demo_dir() + "/reefs.geojson";
  st.reefs.name_field = "name";
  st.reefs.priority_field = "priority";
  st.reefs.surveys = demo_dir() + "/surveys.csv";
  st.reefs.aggregations = demo_dir() + "/aggregations.csv";
  st.reefs.missing_survey = "zero";
  const ReefSet set = ReefSet::load(st.reefs);
  const auto sources = release_sources(set, st);
  REQUIRE(sources.size() > set.size());
  std::size_t zero = 0;
  for (std::size_t k = 0; k < set.size(); ++k) {
    CHECK(sources[k].kind == SourceKind::reef);
    CHECK(sources[k].id == set.reefs()[k].id);
    zero += sources[k].adults == 0;
  }
  CHECK(zero == 5);  // make_reefs.py leaves five reefs unsurveyed
  // LR-02's survey line says 53.3 per ha.
  CHECK(sources[1].adults == Approx(53.3 * set.reefs()[1].area_ha));
  // make_reefs.py: two groups on reefs, one 500 m off a reef, one in open water.
  REQUIRE(sources.size() == set.size() + 4);
  CHECK(sources[set.size()].reef_index >= 0);
  CHECK(sources[set.size() + 1].reef_index >= 0);
  CHECK(sources[set.size() + 2].reef_index == 24);  // LR-25, placed beside it by the script
  CHECK(sources[set.size() + 3].reef_index == -1);
  for (std::size_t k = set.size(); k < sources.size(); ++k) {
    CHECK(sources[k].kind == SourceKind::aggregation);
    CHECK(sources[k].id == "AGG-" + std::to_string(k - set.size() + 1));
  }
  const auto none = release_sources(set, [&] { study::Study s = st; s.reefs.surveys.clear(); s.reefs.aggregations.clear(); return s; }());
  REQUIRE(none.size() == set.size());
  for (const auto& s : none) CHECK(s.adults == 0);
  st.reefs.missing_survey = "refuse";
  CHECK_THROWS_AS(release_sources(set, st), InputError);
}

TEST_CASE("a plan for some sources holds exactly their part of the full plan", "[reefs][release]") {
  // A run shared across processes plans only its own sources; the larvae must
  // be the same as in the single-process plan, bit for bit.
  const ReefSet set({make_reef("a", {Polygon{star(150.1, -20.1, 0.01, 17, 0.4, 3), {}}}),
                     make_reef("b", {Polygon{star(150.2, -20.1, 0.005, 11, 0.2, 2), {}}}),
                     make_reef("c", {Polygon{star(150.3, -20.1, 0.008, 13, 0.3, 1), {}}})});
  ReleaseSource agg;
  agg.id = "AGG-1";
  agg.kind = SourceKind::aggregation;
  agg.points = {{150.0, -20.0}, {150.001, -20.0}};
  const std::vector<ReleaseSource> sources{reef_source(0, "a"), reef_source(1, "b"), agg, reef_source(2, "c")};
  study::ReefSettings settings;
  const auto e = event_with(50, 2.0, 1.0);
  const auto full = plan_release(set, sources, e, 2, settings, 99);
  const std::vector<std::uint32_t> only{1, 3};
  const auto part = plan_release(set, sources, e, 2, settings, 99, only);
  REQUIRE(part.size() == 100);
  for (std::size_t i = 0; i < part.size(); ++i) {
    const ReleasePoint& f = full[only[i / 50] * 50 + i % 50];
    CHECK(part[i].source == f.source);
    CHECK(part[i].particle == f.particle);
    CHECK(part[i].lon == f.lon);
    CHECK(part[i].lat == f.lat);
    CHECK(part[i].release_offset_s == f.release_offset_s);
  }
  CHECK_THROWS_AS(plan_release(set, sources, e, 2, settings, 99, {4}), std::invalid_argument);
}
