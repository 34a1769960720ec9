// Scenario loader: the [connectivity] section (defaults, every check, --set).
#include <catch2/catch.hpp>

#include <string>
#include <vector>

#include "cullcast/base/error.hpp"
#include "cullcast/study/load_study.hpp"
#include "section_test_support.hpp"

using cullcast::InputError;
using Catch::Matchers::Contains;

using namespace cullcast::test;  // kBase, load, error_of

TEST_CASE("connectivity settings: documented defaults without the section") {
  const auto s = load(kBase);
  CHECK(s.connectivity.min_probability == 1e-3);
  CHECK(s.connectivity.target_relative_error == 0.5);
  CHECK(s.connectivity.confidence == 0.95);
  CHECK(s.connectivity.quantiles == std::vector<double>{0.05, 0.5, 0.95});
  CHECK(s.connectivity.generations == 3);
  CHECK(s.connectivity.lifetime_reproduction == 1.0);
  CHECK(s.connectivity.larval_output == "adults");
  CHECK(s.connectivity.attribute.empty());
}

TEST_CASE("connectivity settings: every key read") {
  const auto s = load(kBase + R"([connectivity]
min_probability = 0.01
target_relative_error = 0.2
confidence = 0.9
quantiles = [0, 0.25, 1]
generations = 5
lifetime_reproduction = 40.5
larval_output = "equal"
attribute = ["R-1", "AGG-2"]
)");
  CHECK(s.connectivity.min_probability == 0.01);
  CHECK(s.connectivity.target_relative_error == 0.2);
  CHECK(s.connectivity.confidence == 0.9);
  CHECK(s.connectivity.quantiles == std::vector<double>{0.0, 0.25, 1.0});
  CHECK(s.connectivity.generations == 5);
  CHECK(s.connectivity.lifetime_reproduction == 40.5);
  CHECK(s.connectivity.larval_output == "equal");
  CHECK(s.connectivity.attribute == std::vector<std::string>{"R-1", "AGG-2"});
}

TEST_CASE("connectivity settings: bad values name the key and location") {
  CHECK_THAT(error_of(kBase + "[connectivity]\nmin_probability = 1.5\n"),
             Contains("[connectivity] min_probability"));
  CHECK_THAT(error_of(kBase + "[connectivity]\nconfidence = 1\n"),
             Contains("must lie strictly between 0 and 1"));
  CHECK_THAT(error_of(kBase + "[connectivity]\nquantiles = [0.5, 2]\n"),
             Contains("every quantile must lie in 0..1"));
  CHECK_THAT(error_of(kBase + "[connectivity]\nquantiles = [0.5, \"x\"]\n"),
             Contains("expected a list of numbers"));
  CHECK_THAT(error_of(kBase + "[connectivity]\nquantiles = 0.5\n"),
             Contains("expected a list of numbers"));
  CHECK_THAT(error_of(kBase + "[connectivity]\ngenerations = 0\n"),
             Contains("[connectivity] generations"));
  CHECK_THAT(error_of(kBase + "[connectivity]\nlifetime_reproduction = -1\n"),
             Contains("lifetime_reproduction"));
  CHECK_THAT(error_of(kBase + "[connectivity]\nlarval_output = \"adult\"\n"),
             Contains("larval_output"));
  const std::string e = error_of(kBase + "[connectivity]\nmin_probabilty = 0.1\n");
  CHECK_THAT(e, Contains("s.toml:8:1"));
  CHECK_THAT(e, Contains("did you mean 'min_probability'"));
  CHECK_THAT(error_of(kBase + "[conectivity]\n"), Contains("did you mean [connectivity]"));
}

TEST_CASE("connectivity settings: --set overrides go through the same checks") {
  const auto s = load(kBase, {"connectivity.min_probability=0.02"});
  CHECK(s.connectivity.min_probability == 0.02);
  CHECK_THROWS_AS(load(kBase, {"connectivity.generations=0"}), InputError);
}
