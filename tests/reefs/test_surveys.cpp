// Survey tables: RFC 4180 CSV details, every bad-row error, missing-survey policies.
#include <catch2/catch.hpp>

#include "cullcast/base/error.hpp"
#include "cullcast/reefs/surveys.hpp"
#include "reef_test_support.hpp"

using namespace cullcast;
using namespace cullcast::reefs;
using namespace reef_test;
using Catch::Matchers::Contains;

namespace {

ReefSet three_reefs() {
  // Squares of different sizes so area weighting matters.
  auto square = [](double lon, double size) {
    return Polygon{ring({{lon, -20.0}, {lon + size, -20.0}, {lon + size, -20.0 + size}, {lon, -20.0 + size}}), {}};
  };
  return ReefSet({make_reef("LR-01", {square(150.0, 0.01)}), make_reef("LR-02", {square(150.1, 0.02)}),
                  make_reef("LR-03", {square(150.2, 0.005)})});
}

std::string survey_error(const std::string& name, const std::string& text) {
  const fs::path file = write_file(scratch("surveys") / name, text);
  try {
    load_surveys(file, three_reefs());
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

}  // namespace

TEST_CASE("surveys with a byte-order mark, CRLF line ends and quoted fields", "[reefs][surveys]") {
  // RFC 4180 (Shafranovsky 2005, "Common Format and MIME Type for CSV Files"):
  // CRLF records, "" for a quote, line breaks allowed inside quotes.
  const std::string text =
      "\xEF\xBB\xBF" "Reef_ID,density_per_ha,surveyed_on,count_15_25cm,count_0_15cm,count_25cm_plus,notes\r\n"
      "\"LR-01\",\"12.5\",2025-10-14,3,1,,\"north flank, \"\"poor\"\" visibility\"\r\n"
      "LR-03, 40 ,,0,0,7,\"two\r\nlines\"\r\n"
      "\r\n";
  const fs::path file = write_file(scratch("surveys-ok") / "surveys.csv", text);
  const SurveyTable t = load_surveys(file, three_reefs());
  REQUIRE(t.rows.size() == 2);
  CHECK(t.rows[0].reef_index == 0);
  CHECK(t.rows[0].density_per_ha == 12.5);
  REQUIRE(t.rows[0].surveyed_on.has_value());
  CHECK(t.rows[0].surveyed_on->day == 14);
  CHECK(t.rows[1].reef_index == 2);
  CHECK(t.rows[1].density_per_ha == 40);
  CHECK(t.rows[1].line == 3);
  CHECK_FALSE(t.rows[1].surveyed_on.has_value());
  // Classes sorted by lower bound: 0-15, 15-25, 25+.
  REQUIRE(t.classes.size() == 3);
  CHECK(t.classes[0].min_cm == 0);
  CHECK(t.classes[0].max_cm == 15);
  CHECK(t.classes[1].column == "count_15_25cm");
  CHECK(std::isinf(t.classes[2].max_cm));
  CHECK(t.rows[0].counts[0] == 1.0);
  CHECK(t.rows[0].counts[1] == 3.0);
  CHECK_FALSE(t.rows[0].counts[2].has_value());
  CHECK(t.rows[1].counts[2] == 7.0);
}

TEST_CASE("survey errors name file, line and column", "[reefs][surveys][errors]") {
  const std::string header = "reef_id,density_per_ha,surveyed_on\n";
  struct Case {
    std::string name, text;
    std::vector<std::string> fragments;
  };
  const std::vector<Case> cases = {
      {"unknown.csv", header + "LR-01,3,\nLR-04,2,\n", {"line 3", "column \"reef_id\"", "unknown reef id \"LR-04\"", "did you mean \"LR-0"}},
      {"negative.csv", header + "LR-01,-3,\n", {"line 2", "column \"density_per_ha\"", ">= 0", "-3"}},
      {"nan.csv", header + "LR-01,nan,\n", {"line 2", "column \"density_per_ha\"", "finite number", "nan"}},
      {"text.csv", header + "LR-01,lots,\n", {"line 2", "column \"density_per_ha\"", "\"lots\""}},
      {"empty.csv", header + "LR-01,,\n", {"line 2", "column \"density_per_ha\"", "empty field"}},
      {"nocolumn.csv", "reef_id,densty_per_ha\nLR-01,3\n", {"line 1", "missing column \"density_per_ha\"", "did you mean \"densty_per_ha\""}},
      {"duplicate.csv", header + "LR-01,3,\nLR-02,1,\nLR-01,4,\n", {"line 4", "already has a survey on line 2"}},
      {"fields.csv", header + "LR-01,3\n", {"line 2", "expected 3 fields", "found 2"}},
      {"date.csv", header + "LR-01,3,2025-13-01\n", {"line 2", "column \"surveyed_on\"", "ISO 8601"}},
      {"overlap.csv", "reef_id,density_per_ha,count_0_20cm,count_15_30cm\nLR-01,1,1,1\n", {"line 1", "overlap"}},
      {"badclass.csv", "reef_id,density_per_ha,count_20_10cm\nLR-01,1,1\n", {"line 1", "upper bound"}},
      {"unknowncol.csv", "reef_id,density_per_ha,surveyd_on\nLR-01,1,\n", {"line 1", "unknown column \"surveyd_on\"", "did you mean \"surveyed_on\""}},
      {"badcount.csv", "reef_id,density_per_ha,count_0_15cm\nLR-01,1,-2\n", {"line 2", "column \"count_0_15cm\"", "-2"}},
      {"quote.csv", header + "\"LR-01,3,\n", {"line 2", "not closed"}},
      {"headeronly.csv", header, {"no survey rows"}},
      {"blank.csv", "", {"empty"}},
  };
  for (const auto& c : cases) {
    const std::string e = survey_error(c.name, c.text);
    INFO(c.name << ": " << e);
    CHECK_THAT(e, Contains(c.name));
    for (const auto& f : c.fragments) CHECK_THAT(e, Contains(f));
  }
}

TEST_CASE("missing-survey policies: zero, regional_mean (area-weighted), refuse", "[reefs][surveys]") {
  const ReefSet reefs = three_reefs();
  const fs::path file = write_file(scratch("policies") / "s.csv", "reef_id,density_per_ha\nLR-01,10\nLR-02,40\n");
  const SurveyTable t = load_surveys(file, reefs);
  const auto zero = reef_densities(reefs, t, "zero");
  CHECK(zero == std::vector<double>{10, 40, 0});
  const auto mean = reef_densities(reefs, t, "regional_mean");
  const double a1 = reefs.reefs()[0].area_ha, a2 = reefs.reefs()[1].area_ha;
  // LR-02 is 4 times the area of LR-01, so the mean leans to 40: (10 a1 + 40 a2) / (a1 + a2) ~ 34.
  CHECK(mean[2] == Approx((10 * a1 + 40 * a2) / (a1 + a2)));
  CHECK(mean[2] > 33);
  CHECK(mean[0] == 10);
  CHECK_THROWS_WITH(reef_densities(reefs, t, "refuse"),
                    Contains("s.csv") && Contains("1 reef(s): LR-03") && Contains("refuse"));
  CHECK_THROWS_AS(reef_densities(reefs, t, "guess"), InputError);
}
