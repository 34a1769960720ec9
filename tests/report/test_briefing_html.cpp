#include <catch2/catch.hpp>

#include <GeographicLib/Geodesic.hpp>

#include <cmath>
#include <map>
#include <regex>
#include <string>

#include "report_test_support.hpp"

using namespace cullcast::report;
using Catch::Matchers::Contains;

namespace {

// Value of attribute `attr` in the first element of `svg` that carries `marker`.
double attribute(const std::string& svg, const std::string& marker, const std::string& attr) {
  const auto at = svg.find(marker);
  REQUIRE(at != std::string::npos);
  const auto end = svg.find('>', at);
  const std::string tag = svg.substr(svg.rfind('<', at), end - svg.rfind('<', at));
  std::smatch m;
  REQUIRE(std::regex_search(tag, m, std::regex(" " + attr + "='([-0-9.eE+]+)'")));
  return std::stod(m[1]);
}

}  // namespace

TEST_CASE("input strings appear as text, never as markup") {
  const auto d = report_test::sample_briefing();
  const std::string html = render_briefing_html(d);
  CHECK_THAT(html, Contains("&lt;script&gt;alert(1)&lt;/script&gt;"));
  CHECK(html.find("<script") == std::string::npos);   // no script element at all (the page needs none)
  CHECK(html.find("<b>test</b>") == std::string::npos);  // title and scenario text escaped
  CHECK_THAT(html, Contains("Invented bay &lt;b&gt;test&lt;/b&gt;"));
  CHECK(html.find("<i>A-2</i>") == std::string::npos);   // explanation escaped
  CHECK(html_escape("a'b\"c&d") == "a&#39;b&quot;c&amp;d");
  // Self-contained: nothing is fetched (no http(s) URL other than the SVG namespace, no link/img/script).
  std::string rest = html;
  for (std::size_t p; (p = rest.find("http://www.w3.org/2000/svg")) != std::string::npos;) rest.erase(p, 26);
  CHECK(rest.find("http:") == std::string::npos);
  CHECK(rest.find("https:") == std::string::npos);
  CHECK(html.find("<link") == std::string::npos);
  CHECK(html.find("<img") == std::string::npos);
  CHECK_THAT(html, Contains("@media print"));
  CHECK_THAT(html, Contains("decision support with stated uncertainty"));
  CHECK_THAT(html, Contains("dive-safety codes, permits and licensed practice"));
}

TEST_CASE("a reef's SVG position matches its projected coordinates within a pixel") {
  const auto d = report_test::sample_briefing();
  const std::string svg = svg_role_map(d);
  const MapFrame f = map_frame(d, 78, 12, 820);
  for (const auto& r : d.reefs) {
    const std::string marker = "class='reef-centroid' data-reef='" + html_escape(r.id) + "'";
    CHECK(std::fabs(attribute(svg, marker, "cx") - f.x(r.centroid.lon)) < 1.0);
    CHECK(std::fabs(attribute(svg, marker, "cy") - f.y(r.centroid.lat)) < 1.0);
  }
  // Outside check of the projection: pixel distances between reefs are in the
  // proportions of geodesic distances on WGS84 (GeographicLib, Karney 2013,
  // "Algorithms for geodesics", J. Geodesy 87:43-55) to 1 % over this ~30 km box
  // (equirectangular with cos(mid-latitude): common practice, no source, for small regions).
  const auto& g = GeographicLib::Geodesic::WGS84();
  auto px = [&](int a, int b) {
    return std::hypot(f.x(d.reefs[a].centroid.lon) - f.x(d.reefs[b].centroid.lon),
                      f.y(d.reefs[a].centroid.lat) - f.y(d.reefs[b].centroid.lat));
  };
  auto m = [&](int a, int b) {
    double s12;
    g.Inverse(d.reefs[a].centroid.lat, d.reefs[a].centroid.lon, d.reefs[b].centroid.lat, d.reefs[b].centroid.lon, s12);
    return s12;
  };
  const double scale = px(0, 3) / m(0, 3);
  CHECK(px(0, 1) / m(0, 1) == Approx(scale).epsilon(0.01));
  CHECK(px(1, 2) / m(1, 2) == Approx(scale).epsilon(0.01));
  CHECK(px(2, 3) / m(2, 3) == Approx(scale).epsilon(0.01));
  // The scale bar: its pixel length over its km equals the map scale (same 1 %, WGS84 vs the 6371 km sphere).
  const double bar_km = attribute(svg, "class='scale-bar'", "data-km");
  const double bar_px = attribute(svg, "class='scale-bar'", "data-px");
  CHECK(bar_px / (bar_km * 1000) == Approx(scale).epsilon(0.01));
}

TEST_CASE("map marks priority reefs, numbered cull sites, the island and links with width by probability") {
  const auto d = report_test::sample_briefing();
  const std::string svg = svg_role_map(d);
  CHECK_THAT(svg, Contains("class='priority' data-reef='A-2'"));
  CHECK_THAT(svg, Contains("class='priority' data-reef='A-4'"));
  CHECK(svg.find("class='priority' data-reef='A-1'") == std::string::npos);
  CHECK_THAT(svg, Contains("data-rank='1'"));
  CHECK_THAT(svg, Contains("data-rank='2'"));
  CHECK_THAT(svg, Contains("class='land'"));
  CHECK_THAT(svg, Contains("class='north-arrow'"));
  // Widths linear in P: w = 0.8 + 7.2 P / Pmax (self-links are not drawn).
  const double w1 = attribute(svg, "data-from='A-1' data-to='A-2'", "stroke-width");
  const double w2 = attribute(svg, "data-from='A-3' data-to='A-2'", "stroke-width");
  CHECK(w1 == Approx(8.0).margin(0.01));
  CHECK(w2 == Approx(0.8 + 7.2 * 0.5).margin(0.01));
  CHECK(svg.find("data-from='A-1' data-to='A-1'") == std::string::npos);
}

TEST_CASE("plot marks match their values") {
  const auto d = report_test::sample_briefing();
  const std::string curve = svg_budget_curve(d);
  // y is linear in the value, x in the budget: the fitted line through the
  // first two points predicts the others (plot area 260 px high, 560 px wide).
  std::regex point("data-budget='([-0-9.e+]+)' data-value='([-0-9.e+]+)' cx='([-0-9.]+)' cy='([-0-9.]+)'");
  std::vector<std::array<double, 4>> pts;
  for (auto it = std::sregex_iterator(curve.begin(), curve.end(), point); it != std::sregex_iterator(); ++it) {
    pts.push_back({std::stod((*it)[1]), std::stod((*it)[2]), std::stod((*it)[3]), std::stod((*it)[4])});
  }
  REQUIRE(pts.size() == d.curve.size());
  const double ky = (pts[1][3] - pts[0][3]) / (pts[1][1] - pts[0][1]);
  const double kx = (pts[1][2] - pts[0][2]) / (pts[1][0] - pts[0][0]);
  for (const auto& p : pts) {
    CHECK(p[3] == Approx(pts[0][3] + ky * p[1]).margin(0.02));
    CHECK(p[2] == Approx(pts[0][2] + kx * p[0]).margin(0.02));
  }
  CHECK(ky < 0);  // more averted = higher on the page
  // Robustness bars: length proportional to the mean contribution; whisker starts at the 10 % quantile.
  const std::string bars = svg_robustness(d);
  std::regex bar("data-value='([-0-9.e+]+)' x='([-0-9.]+)' y='[-0-9.]+' width='([-0-9.]+)'");
  std::vector<std::pair<double, double>> v;
  for (auto it = std::sregex_iterator(bars.begin(), bars.end(), bar); it != std::sregex_iterator(); ++it) {
    v.push_back({std::stod((*it)[1]), std::stod((*it)[3])});
  }
  REQUIRE(v.size() == 2);
  CHECK(v[0].second / v[0].first == Approx(v[1].second / v[1].first).epsilon(1e-3));
  CHECK(v[0].first == Approx(500));
  // Matrix: one cell per non-zero link. The centroids span 0.25 deg of longitude
  // (0.235 deg at cos 20.2 deg) and 0.25 deg of latitude: taller than wide, so
  // reefs are ordered south to north.
  const std::string m = svg_matrix(d);
  std::size_t cells = 0;
  for (std::size_t p = 0; (p = m.find("class='cell'", p)) != std::string::npos; ++p) ++cells;
  CHECK(cells == d.links.size());
  CHECK(position_order(d.reefs) == std::vector<int>{3, 2, 1, 0});
}
