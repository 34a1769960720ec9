// Scenario loader: the [cull] section (defaults, every key, checks, --set).
#include <catch2/catch.hpp>

#include <cmath>
#include <string>

#include "cullcast/study/load_study.hpp"
#include "section_test_support.hpp"

using Catch::Matchers::Contains;

using namespace cullcast::test;  // kBase, load, error_of

TEST_CASE("cull settings: documented defaults without the section") {
  const auto c = load(kBase).cull;
  CHECK_FALSE(c.present);
  CHECK(c.vessel_days == 10.0);
  CHECK(c.effort_step_days == 0.5);
  CHECK(c.max_days_per_reef == 5.0);
  CHECK(c.efficiency_ha_per_day == 20.0);
  CHECK(std::isnan(c.home_lon));
  CHECK(std::isnan(c.home_lat));
  CHECK(c.speed_knots == 15.0);
  CHECK(c.hours_per_day == 10.0);
  CHECK(c.priority_threshold == 0.0);
  CHECK(c.horizon_seasons == 1);
  CHECK(c.maturation_seasons == 2);            // MacNeil et al. (2017), Diversity 9(1):18: mature at ~2 years
  CHECK(c.juvenile_mortality_per_day == 0.078);  // Keesing et al. (1996), Oceanol. Acta 19:441-448
  CHECK(c.early_juvenile_days == 30.0);
  CHECK(c.later_juvenile_survival_per_year == 0.5);
  CHECK(c.adult_survival_per_year == 0.8);
  CHECK(c.female_fraction == 0.5);
  CHECK(c.eggs_per_female == 33.5e6);          // Babcock, Milton & Pratchett (2016): 29-38 million, midpoint
  CHECK(c.reference_diameter_cm == 39.2);      // same source: average female 39.2 cm
  CHECK(c.fecundity_exponent == 3.0);
  CHECK(c.default_diameter_cm == 39.2);
  CHECK(c.open_class_width_cm == 10.0);
  CHECK(c.fertilisation_peak == 0.86);
  CHECK(c.fertilisation_scale_m == 46.9);
  CHECK(c.aggregation_density_per_ha == 1000.0);
  CHECK(c.method == "auto");
  CHECK(c.exact_max_reefs == 14);
  CHECK(c.exact_max_plans == 2e5);
}

TEST_CASE("cull settings: every key read") {
  const auto c = load(kBase + R"([cull]
vessel_days = 12
effort_step_days = 0.25
max_days_per_reef = 3
efficiency_ha_per_day = 8.5
home_lon = 147.5
home_lat = -18.25
speed_knots = 20
hours_per_day = 8
priority_threshold = 0.4
horizon_seasons = 4
maturation_seasons = 3
juvenile_mortality_per_day = 0.05
early_juvenile_days = 60
later_juvenile_survival_per_year = 0.3
adult_survival_per_year = 0.7
female_fraction = 0.45
eggs_per_female = 30e6
reference_diameter_cm = 35
fecundity_exponent = 2.5
default_diameter_cm = 30
open_class_width_cm = 5
fertilisation_peak = 0.8
fertilisation_scale_m = 40
aggregation_density_per_ha = 500
method = "greedy"
exact_max_reefs = 10
exact_max_plans = 1000
)").cull;
  CHECK(c.present);
  CHECK(c.vessel_days == 12);
  CHECK(c.effort_step_days == 0.25);
  CHECK(c.max_days_per_reef == 3);
  CHECK(c.efficiency_ha_per_day == 8.5);
  CHECK(c.home_lon == 147.5);
  CHECK(c.home_lat == -18.25);
  CHECK(c.speed_knots == 20);
  CHECK(c.hours_per_day == 8);
  CHECK(c.priority_threshold == 0.4);
  CHECK(c.horizon_seasons == 4);
  CHECK(c.maturation_seasons == 3);
  CHECK(c.juvenile_mortality_per_day == 0.05);
  CHECK(c.early_juvenile_days == 60);
  CHECK(c.later_juvenile_survival_per_year == 0.3);
  CHECK(c.adult_survival_per_year == 0.7);
  CHECK(c.female_fraction == 0.45);
  CHECK(c.eggs_per_female == 30e6);
  CHECK(c.reference_diameter_cm == 35);
  CHECK(c.fecundity_exponent == 2.5);
  CHECK(c.default_diameter_cm == 30);
  CHECK(c.open_class_width_cm == 5);
  CHECK(c.fertilisation_peak == 0.8);
  CHECK(c.fertilisation_scale_m == 40);
  CHECK(c.aggregation_density_per_ha == 500);
  CHECK(c.method == "greedy");
  CHECK(c.exact_max_reefs == 10);
  CHECK(c.exact_max_plans == 1000);
}

TEST_CASE("cull settings: an empty section is present with defaults") {
  const auto c = load(kBase + "[cull]\n").cull;
  CHECK(c.present);
  CHECK(c.vessel_days == 10.0);
}

TEST_CASE("cull settings: --set overrides a key") {
  const auto c = load(kBase + "[cull]\nvessel_days = 4\n", {"cull.vessel_days=12"}).cull;
  CHECK(c.vessel_days == 12);
}

TEST_CASE("cull settings: bad values name the key and location") {
  CHECK_THAT(error_of(kBase + "[cull]\nmethod = \"fastest\"\n"), Contains("[cull] method"));
  CHECK_THAT(error_of(kBase + "[cull]\neffort_step_days = 0\n"), Contains("effort_step_days"));
  CHECK_THAT(error_of(kBase + "[cull]\nfemale_fraction = 1.5\n"), Contains("female_fraction"));
  CHECK_THAT(error_of(kBase + "[cull]\nhome_lon = 147\n"), Contains("home_lat"));
  CHECK_THAT(error_of(kBase + "[cull]\nhome_lon = 200\nhome_lat = 0\n"), Contains("home_lon"));
  CHECK_THAT(error_of(kBase + "[cull]\nhorizon_seasons = 0\n"), Contains("horizon_seasons"));
  CHECK_THAT(error_of(kBase + "[cull]\nvesel_days = 3\n"), Contains("vessel_days"));
  CHECK_THAT(error_of(kBase + "[cull]\nvessel_days = \"many\"\n"), Contains("vessel_days"));
  CHECK_THAT(error_of(kBase + "[cul]\n"), Contains("cull"));
}
