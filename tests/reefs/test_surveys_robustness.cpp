// Regression cases found by fuzzing the survey reader (tests/fuzz/fuzz_surveys.cpp).
// Expected for any input: a table or InputError. Before the fixes a long size-class
// column name overflowed the stack inside std::regex, and a bound of hundreds of
// digits escaped as std::out_of_range from std::stod.
#include <catch2/catch.hpp>

#include "cullcast/base/error.hpp"
#include "cullcast/reefs/surveys.hpp"
#include "reef_test_support.hpp"

using namespace cullcast;
using namespace cullcast::reefs;
using namespace reef_test;
using Catch::Matchers::Contains;

namespace {

ReefSet one_reef() {
  return ReefSet({make_reef("LR-01", {Polygon{ring({{150.0, -20.0}, {150.01, -20.0}, {150.01, -19.99}}), {}}})});
}

std::string load_error(const std::string& name, const std::string& text) {
  const fs::path file = write_file(scratch("surveys-robust") / name, text);
  try {
    (void)load_surveys(file, one_reef());
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

}  // namespace

TEST_CASE("a very long size-class column name is an unknown column, not a stack overflow",
          "[reefs][surveys]") {
  const std::string name = "count_" + std::string(200000, '1') + "_2cm";
  const std::string message = load_error("long.csv", "reef_id,density_per_ha," + name + "\nLR-01,1,2\n");
  CHECK_THAT(message, Contains("unknown column"));
  CHECK_THAT(message, Contains("count_<lo>_<hi>cm"));
}

TEST_CASE("size-class bounds of hundreds of digits are refused as InputError", "[reefs][surveys]") {
  const std::string name = "count_" + std::string(400, '9') + "_" + std::string(401, '9') + "cm";
  CHECK_THAT(load_error("huge.csv", "reef_id,density_per_ha," + name + "\nLR-01,1,2\n"),
             Contains("unknown column"));
  CHECK_THAT(load_error("huge-open.csv", "reef_id,density_per_ha,count_" + std::string(400, '9') +
                                             "cm_plus\nLR-01,1,2\n"),
             Contains("unknown column"));
}

TEST_CASE("the hand-written size-class matcher keeps the documented forms", "[reefs][surveys]") {
  const fs::path file = write_file(scratch("surveys-robust") / "classes.csv",
                                   "reef_id,density_per_ha,COUNT_12.5_25cm,count_0_12.5cm,count_25cm_plus\n"
                                   "LR-01,3,1,2,3\n");
  const SurveyTable t = load_surveys(file, one_reef());
  REQUIRE(t.classes.size() == 3);
  CHECK(t.classes[0].min_cm == 0.0);
  CHECK(t.classes[0].max_cm == 12.5);
  CHECK(t.classes[1].min_cm == 12.5);
  CHECK(t.classes[1].max_cm == 25.0);
  CHECK(t.classes[2].min_cm == 25.0);
  CHECK(std::isinf(t.classes[2].max_cm));
  for (const char* bad : {"count_5_cm", "count__5cm", "count_5_10", "count_5cm_plus_", "count_.5_1cm",
                          "count_5._10cm", "count_5_10cmx"}) {
    INFO(bad);
    CHECK_THAT(load_error("bad.csv", std::string("reef_id,density_per_ha,") + bad + "\nLR-01,1,2\n"),
               Contains("unknown column"));
  }
}
