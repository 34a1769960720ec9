// The comparison section: the slope chart places each reef at its ranks, the
// tables escape their text, the page is written atomically.
#include <catch2/catch.hpp>
#include <fstream>
#include <regex>
#include <sstream>

#include "../compare/compare_test_support.hpp"
#include "cullcast/report/comparison_section.hpp"

using namespace cullcast;
using Catch::Matchers::Contains;

TEST_CASE("slope chart: one line per reef in either plan, y from its ranks", "[report]") {
  compare::test::TempDir a("sec-a"), b("sec-b");
  const std::vector<std::pair<std::string, std::string>> roles = {
      {"R1", "source"}, {"R<2>", "sink"}, {"R3", "sink"}};
  compare::test::write_run(a.path, {{"R1", "R<2>", 100, 10, 0.1}}, roles,
                           {{"R1", 1, 10}, {"R<2>", 1, 5}});
  compare::test::write_run(b.path, {{"R1", "R<2>", 100, 40, 0.4}},
                           {{"R1", "sink"}, {"R<2>", "sink"}, {"R3", "sink"}},
                           {{"R3", 1, 10}, {"R1", 1, 5}});
  const compare::RunComparison c =
      compare::compare_runs(compare::read_run_outputs(a.path), compare::read_run_outputs(b.path));
  report::ComparisonLabels labels;
  labels.name_a = "last <plan>";
  const std::string svg = report::svg_rank_slope(c, labels);
  // three reefs in either plan -> three slope groups; R1 goes 1 -> 2
  const std::regex group(
      "<g class='slope' data-reef='([^']*)' data-rank-a='(\\d+)' data-rank-b='(\\d+)'>");
  int groups = 0;
  for (auto it = std::sregex_iterator(svg.begin(), svg.end(), group); it != std::sregex_iterator();
       ++it) {
    ++groups;
    if ((*it)[1] == "R1") {
      CHECK((*it)[2] == "1");
      CHECK((*it)[3] == "2");
    }
  }
  CHECK(groups == 3);
  // y = 34 + 18 (rank - 1); "not in plan" is row 3 (the plans have at most 2 reefs)
  CHECK_THAT(svg, Contains("<line x1='150' y1='34' x2='370' y2='52'"));  // R1: 1 -> 2
  CHECK_THAT(svg, Contains("<line x1='150' y1='70' x2='370' y2='34'"));  // R3: out -> 1
  CHECK_THAT(svg, Contains("R&lt;2&gt;"));
  CHECK(svg.find("R<2>") == std::string::npos);
  const std::string html = report::render_comparison_section(c, labels);
  CHECK_THAT(html, Contains("last &lt;plan&gt;"));
  CHECK_THAT(html, Contains("Entering the recommended set: <b>R3</b>"));
  CHECK_THAT(html, Contains("Reefs that changed role"));
  CHECK_THAT(html, Contains("two-proportion z-test, two-sided, level 0.05"));
  compare::test::TempDir out("sec-out");
  report::write_comparison_html(out.path / "comparison.html", c, labels);
  std::ifstream in(out.path / "comparison.html");
  std::stringstream s;
  s << in.rdbuf();
  CHECK_THAT(s.str(), Contains("<!DOCTYPE html>"));
  CHECK_THAT(s.str(), Contains("class='rank-slope'"));
}
