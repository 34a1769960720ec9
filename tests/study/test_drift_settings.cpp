// Scenario loader: the drift keys of issue 6 — depth behaviour and varying
// diffusivity in [motion], temperature and food in [larvae], [tracks] and
// [backward] (defaults, every key read, each check names the key).
#include <catch2/catch.hpp>

#include <string>

#include "cullcast/study/load_study.hpp"
#include "section_test_support.hpp"

using Catch::Matchers::Contains;

using namespace cullcast::test;  // kBase, load, error_of

TEST_CASE("drift settings: documented defaults without the keys") {
  const auto s = load(kBase);
  CHECK(s.motion.depth == "fixed");
  CHECK(s.motion.band_top_m == 0.0);
  CHECK(s.motion.band_bottom_m == 10.0);
  CHECK(s.motion.kv_m2_s == 0.0);
  CHECK(s.motion.depth_by_age.empty());
  CHECK(s.motion.swim_m_s == 0.001);
  CHECK(s.motion.kh_from == "constant");
  CHECK(s.motion.kv_from == "constant");
  CHECK(s.motion.diffusivity_file.empty());
  CHECK(s.motion.smagorinsky_c == 0.1);
  CHECK(s.larvae.temperature_effect == "auto");
  CHECK(s.larvae.reference_temperature_c == 28.0);
  CHECK(s.larvae.development_q10 == 5.95);
  CHECK(s.larvae.food_effect == "auto");
  CHECK(s.larvae.food_saturation_mg_m3 == 3.0);
  CHECK(s.larvae.food_odds_per_doubling == 8.0);
  CHECK(s.larvae.completion_at_saturation == 0.9);
  CHECK_FALSE(s.tracks.enabled);
  CHECK(s.backward.sink.empty());
}

TEST_CASE("drift settings: every key read") {
  const auto s = load(kBase + R"([motion]
depth = "band"
band_top_m = 2
band_bottom_m = 15.5
kv_m2_s = 0.002
depth_by_age = [[0, 0, 5], [10, 5, 20]]
swim_m_s = 0.002
kh_from = "smagorinsky"
kv_from = "field"
kh_variable = "kh"
kv_variable = "kv"
smagorinsky_c = 0.15
[larvae]
temperature_effect = "off"
reference_temperature_c = 27
development_q10 = 3
food_effect = "off"
food_saturation_mg_m3 = 2.5
food_odds_per_doubling = 6
completion_at_saturation = 0.8
[tracks]
every_particle = 10
every_steps = 3
[backward]
sink = "R-7"
arrival = 2027-01-02T00:00:00Z
hours = 12
larvae = 500
depth_m = 4
)");
  CHECK(s.motion.depth == "band");
  CHECK(s.motion.band_top_m == 2.0);
  CHECK(s.motion.band_bottom_m == 15.5);
  CHECK(s.motion.kv_m2_s == 0.002);
  REQUIRE(s.motion.depth_by_age.size() == 2);
  CHECK(s.motion.depth_by_age[1].age_days == 10.0);
  CHECK(s.motion.depth_by_age[1].top_m == 5.0);
  CHECK(s.motion.depth_by_age[1].bottom_m == 20.0);
  CHECK(s.motion.swim_m_s == 0.002);
  CHECK(s.motion.kh_from == "smagorinsky");
  CHECK(s.motion.kv_from == "field");
  CHECK(s.motion.kh_variable == "kh");
  CHECK(s.motion.kv_variable == "kv");
  CHECK(s.motion.smagorinsky_c == 0.15);
  CHECK(s.larvae.temperature_effect == "off");
  CHECK(s.larvae.reference_temperature_c == 27.0);
  CHECK(s.larvae.development_q10 == 3.0);
  CHECK(s.larvae.food_effect == "off");
  CHECK(s.larvae.food_saturation_mg_m3 == 2.5);
  CHECK(s.larvae.food_odds_per_doubling == 6.0);
  CHECK(s.larvae.completion_at_saturation == 0.8);
  CHECK(s.tracks.enabled);  // the section switches tracks on
  CHECK(s.tracks.every_particle == 10);
  CHECK(s.tracks.every_steps == 3);
  CHECK(s.backward.sink == "R-7");
  CHECK(s.backward.arrival.year == 2027);
  CHECK(s.backward.hours == 12.0);
  CHECK(s.backward.larvae == 500);
  CHECK(s.backward.depth_m == 4.0);
}

TEST_CASE("drift settings: --set reaches the new keys") {
  const auto s = load(kBase, {"motion.depth=3d", "motion.kv_m2_s=0.01", "tracks.enabled=true"});
  CHECK(s.motion.depth == "3d");
  CHECK(s.motion.kv_m2_s == 0.01);
  CHECK(s.tracks.enabled);
}

TEST_CASE("drift settings: each bad value names its key") {
  CHECK_THAT(error_of(kBase + "[motion]\ndepth = \"2.5d\"\n"), Contains("[motion] depth"));
  CHECK_THAT(error_of(kBase + "[motion]\nband_top_m = 10\nband_bottom_m = 5\n"),
             Contains("band_bottom_m") && Contains("band_top_m"));
  CHECK_THAT(error_of(kBase + "[motion]\nkv_m2_s = -1\n"), Contains("kv_m2_s"));
  CHECK_THAT(error_of(kBase + "[motion]\ndepth_by_age = [[0, 5]]\n"),
             Contains("depth_by_age") && Contains("three numbers"));
  CHECK_THAT(error_of(kBase + "[motion]\ndepth_by_age = [[0, 5, 2]]\n"),
             Contains("depth_by_age") && Contains("top_m <= bottom_m"));
  CHECK_THAT(error_of(kBase + "[motion]\ndepth_by_age = [[3, 0, 5], [2, 0, 5]]\n"),
             Contains("ages must increase"));
  CHECK_THAT(error_of(kBase + "[motion]\nkh_from = \"okubo\"\n"), Contains("kh_from"));
  CHECK_THAT(error_of(kBase + "[motion]\nsmagorinsky_c = 2\n"), Contains("smagorinsky_c"));
  CHECK_THAT(error_of(kBase + "[larvae]\ndevelopment_q10 = 0.5\n"), Contains("development_q10"));
  CHECK_THAT(error_of(kBase + "[larvae]\ncompletion_at_saturation = 1\n"),
             Contains("completion_at_saturation"));
  CHECK_THAT(error_of(kBase + "[larvae]\nfood_effect = \"on\"\n"), Contains("food_effect"));
  CHECK_THAT(error_of(kBase + "[tracks]\nevery_steps = 0\n"), Contains("[tracks] every_steps"));
  CHECK_THAT(error_of(kBase + "[tracks]\nevery_particles = 3\n"), Contains("every_particle"));
  CHECK_THAT(error_of(kBase + "[backward]\narrival = 2027-01-02T00:00:00Z\n"), Contains("[backward] missing required key 'sink'"));
  CHECK_THAT(error_of(kBase + "[backward]\nsink = \"R-1\"\n"), Contains("arrival"));
  CHECK_THAT(error_of(kBase + "[backwards]\n"), Contains("unknown section [backwards]"));
}
