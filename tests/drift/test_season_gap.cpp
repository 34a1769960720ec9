// Currents from two seasons, one year apart (two real CF-NetCDF files written
// here with netCDF-C++): a spawning event runs inside one season's record and
// is refused when its larval lifetime would cross the gap; larvae whose
// development is slowed by cool water stop at the gap, never drifting through
// it on currents interpolated across a year.
#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <netcdf>

#include "../support/drift_scene.hpp"
#include "../support/scratch_folder.hpp"
#include "../support/uniform_currents.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/drift_run.hpp"
#include "cullcast/reefs/reef_set.hpp"
#include "cullcast/reefs/release_plan.hpp"
#include "cullcast/study/load_study.hpp"

namespace fs = std::filesystem;
using namespace cullcast;

namespace {

struct TwoSeasons : test::ScratchFolder {
  TwoSeasons() : ScratchFolder("season-gap") {
    write_season("season-2026.nc", "hours since 2026-12-01 00:00:00");
    write_season("season-2027.nc", "hours since 2027-12-01 00:00:00");
    std::ofstream(dir / "reefs.geojson") << R"({"type":"FeatureCollection","features":[
{"type":"Feature","properties":{"id":"MID"},
 "geometry":{"type":"Polygon","coordinates":[[[150.20,-20.12],[150.22,-20.12],[150.22,-20.08],[150.20,-20.08],[150.20,-20.12]]]}}
]})";
  }

  // Still water at 18 degC, hourly for 5 days (121 frames).
  void write_season(const std::string& name, const std::string& time_units) const {
    test::CurrentsSpec c;
    c.name = name;
    c.time_units = time_units;
    c.u_m_s = {0.0};
    c.temperature_c = 18.0;
    c.temperature_degc = true;
    test::write_uniform_currents(dir, c);
  }

  study::Study study(const std::string& spawning, const std::string& temperature_effect) const {
    std::ofstream(dir / "s.toml") << R"([study]
seed = 5
[currents]
files = ["season-*.nc"]
[reefs]
layer = "reefs.geojson"
)" << spawning << R"(
[larvae]
precompetent_days = 1.0
competent_days = 1.0
mortality_per_day = 0.0
settle_rate_per_day = 0.0001
temperature_effect = ")" << temperature_effect << R"("
[motion]
dt_minutes = 60
kh_m2_s = 0
[outputs]
dir = "out"
)";
    return study::load_study(dir / "s.toml");
  }
};

const std::string kOneNightEachSeason = R"(
[[spawning]]
label = "2026"
start = "2026-12-02T00:00:00Z"
larvae_per_reef = 50
[[spawning]]
label = "2027"
start = "2027-12-02T00:00:00Z"
larvae_per_reef = 50
)";

}  // namespace

TEST_CASE("two seasons: the gap between the files is found, each season runs on its own currents",
          "[drift][seasons]") {
  TwoSeasons w;
  const study::Study s = w.study(kOneNightEachSeason, "off");
  currents::CurrentField field = currents::CurrentField::open(s.currents);
  REQUIRE(field.gaps().size() == 1);
  CHECK(field.format_time(field.gaps()[0].from_s) == "2026-12-06T00:00:00Z");
  CHECK(field.format_time(field.gaps()[0].to_s) == "2027-12-01T00:00:00Z");
  const auto summary = test::run_drift_from_files(s);
  REQUIRE(summary.events.size() == 2);
  // Lifetime 2 days at the reference temperature (effect off): 48 hourly
  // steps per event, 50 larvae each, nothing left drifting.
  for (const auto& e : summary.events) {
    CHECK(e.fates.released == 50);
    CHECK(e.fates.drifting == 0);
    CHECK(e.particle_steps <= 50u * 48u);
  }
}

TEST_CASE("two seasons: an event whose larval lifetime crosses the gap is refused, naming the gap",
          "[drift][seasons]") {
  TwoSeasons w;
  // 2026-12-04 + 2 days of larval life = 2026-12-06T12:00Z, past the last 2026 frame.
  const study::Study s = w.study("[[spawning]]\nstart = \"2026-12-04T12:00:00Z\"\nlarvae_per_reef = 10\n", "off");
  try {
    test::run_drift_from_files(s);
    FAIL("an event across the gap was accepted");
  } catch (const InputError& e) {
    const std::string m = e.what();
    CHECK_THAT(m, Catch::Contains("needs currents from 2026-12-04T12:00:00Z") &&
                      Catch::Contains("gap from 2026-12-06T00:00:00Z to 2027-12-01T00:00:00Z") &&
                      Catch::Contains("does not interpolate across a gap"));
  }
  CHECK(!fs::exists(s.outputs.dir / "settlement.nc"));
}

TEST_CASE("two seasons: slowed development stops at the gap instead of drifting through it",
          "[drift][seasons]") {
  TwoSeasons w;
  // At 18 degC the development rate is 1/Q10 = 1/5.95 of the rate at 28 degC
  // (one Q10 step down), so the 2-day lifetime lasts ~12 calendar days: far
  // more than the 4 days left in the 2026 record after the first night.
  const study::Study s = w.study(kOneNightEachSeason, "auto");
  const auto summary = test::run_drift_from_files(s);
  REQUIRE(summary.events.size() == 2);
  const auto& first = summary.events[0];
  CHECK(first.fates.drifting > 0);
  // Stepping ends with the 2026 record: 96 hourly steps from 2026-12-02T00Z to 12-06T00Z.
  CHECK(first.particle_steps <= 50u * 96u);
  bool warned = false;
  for (const auto& text : summary.warnings) {
    if (text.find("2026: ") == 0 && text.find("currents end at 2026-12-06T00:00:00Z, before a gap") != std::string::npos)
      warned = true;
  }
  CHECK(warned);
}
