// Scenario loader: every documented error path, the template round trip and
// --set overrides.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>
#include <limits>
#include <string>

#include "cullcast/base/error.hpp"
#include "cullcast/study/load_study.hpp"

namespace fs = std::filesystem;
using cullcast::InputError;
using cullcast::study::LoadOptions;
using cullcast::study::load_study;
using cullcast::study::load_study_text;
using Catch::Matchers::Contains;

namespace {

// A folder with the files a scenario points at, removed afterwards.
struct ScenarioDir {
  fs::path dir;
  ScenarioDir() {
    dir = fs::temp_directory_path() /
          ("cullcast-study-" + std::to_string(reinterpret_cast<std::uintptr_t>(this)));
    fs::create_directories(dir / "currents");
    std::ofstream(dir / "currents" / "a.nc") << "x";
    std::ofstream(dir / "currents" / "b.nc") << "x";
    std::ofstream(dir / "reefs.geojson") << "{}";
  }
  ~ScenarioDir() {
    std::error_code ignored;
    fs::remove_all(dir, ignored);
  }
  fs::path write(const std::string& text) const {
    const fs::path p = dir / "s.toml";
    std::ofstream(p) << text;
    return p;
  }
};

const std::string kMinimal = R"([study]
name = "t"
seed = 7
[currents]
files = ["currents/*.nc"]
[reefs]
layer = "reefs.geojson"
[[spawning]]
start = "2026-12-08T20:00:00Z"
hours = 2.0
larvae_per_reef = 100
)";

std::string error_of(const ScenarioDir& d, const std::string& text, LoadOptions options = {}) {
  try {
    load_study(d.write(text), options);
  } catch (const InputError& e) {
    return e.what();
  }
  return "no error";
}

}  // namespace

TEST_CASE("minimal scenario loads with documented defaults") {
  ScenarioDir d;
  const auto s = load_study(d.write(kMinimal));
  CHECK(s.study.seed == 7);
  REQUIRE(s.currents.files.size() == 2);
  CHECK(s.currents.files[0].filename() == "a.nc");  // sorted, absolute
  CHECK(s.currents.files[0].is_absolute());
  CHECK(s.reefs.layer == (d.dir / "reefs.geojson").lexically_normal());
  REQUIRE(s.spawning.size() == 1);
  CHECK(s.spawning[0].start.year == 2026);
  CHECK(s.spawning[0].start.hour == 20);
  CHECK(s.spawning[0].larvae_per_reef == 100);
  CHECK(s.larvae.precompetent_days == 14.0);
  CHECK(s.larvae.competent_days == 29.0);
  CHECK(s.larvae.settle_rate_per_day == std::numeric_limits<double>::infinity());
  CHECK(s.motion.dt_minutes == 10.0);
  CHECK(s.motion.scheme == "rk4");
  CHECK(s.outputs.dir == (d.dir / "out").lexically_normal());
}

TEST_CASE("template round-trips through the loader") {
  ScenarioDir d;
  const auto s = load_study(d.write(cullcast::study::scenario_template()));
  CHECK(s.study.seed == 42);
  CHECK(s.spawning.size() == 1);
  CHECK(s.reefs.id_field == "id");
  CHECK(s.reefs.priority_field == "priority");
  CHECK(s.motion.kh_m2_s == 0.0);
}

TEST_CASE("misspelt key fails with a suggestion and file:line:column") {
  ScenarioDir d;
  const std::string e = error_of(d, kMinimal + "[larvae]\nprecompetant_days = 10\n");
  CHECK_THAT(e, Contains("s.toml:13:1"));
  CHECK_THAT(e, Contains("unknown key 'precompetant_days'"));
  CHECK_THAT(e, Contains("did you mean 'precompetent_days'"));
}

TEST_CASE("misspelt section fails with a suggestion") {
  ScenarioDir d;
  const std::string e = error_of(d, kMinimal + "[moton]\ndt_minutes = 5\n");
  CHECK_THAT(e, Contains("unknown section [moton]"));
  CHECK_THAT(e, Contains("did you mean [motion]"));
}

TEST_CASE("wrong types name the key, the expectation and the location") {
  ScenarioDir d;
  std::string e = error_of(d, kMinimal + "[motion]\ndt_minutes = \"ten\"\n");
  CHECK_THAT(e, Contains("s.toml:13:14"));
  CHECK_THAT(e, Contains("[motion] dt_minutes: expected a number, found string \"ten\""));
  e = error_of(d, kMinimal + "[outputs]\nsettlement_csv = 1\n");
  CHECK_THAT(e, Contains("expected true or false"));
  e = error_of(d, kMinimal + "[study]\n");  // section twice is invalid TOML
  CHECK_THAT(e, Contains("not valid TOML"));
  e = error_of(d, "[study]\nseed = 1.5\n" + kMinimal.substr(kMinimal.find("[currents]")));
  CHECK_THAT(e, Contains("[study] seed: expected a whole number"));
}

TEST_CASE("missing required keys and sections") {
  ScenarioDir d;
  CHECK_THAT(error_of(d, "[study]\nname='x'\n"), Contains("missing section [currents]"));
  std::string no_layer = kMinimal;
  no_layer.replace(no_layer.find("layer = \"reefs.geojson\"\n"), 24, "");
  CHECK_THAT(error_of(d, no_layer), Contains("[reefs] missing required key 'layer'"));
  std::string no_spawning = kMinimal.substr(0, kMinimal.find("[[spawning]]"));
  CHECK_THAT(error_of(d, no_spawning), Contains("missing [[spawning]]"));
  std::string no_start = kMinimal;
  no_start.replace(no_start.find("start = "), 31, "");
  CHECK_THAT(error_of(d, no_start), Contains("[spawning 1] missing required key 'start'"));
}

TEST_CASE("impossible values are refused") {
  ScenarioDir d;
  CHECK_THAT(error_of(d, kMinimal + "[motion]\ndt_minutes = -5\n"),
             Contains("dt_minutes: must be a positive finite number (minutes), found -5"));
  CHECK_THAT(error_of(d, kMinimal + "[larvae]\ncompetent_days = 0\n"),
             Contains("competent_days: must be a positive"));
  CHECK_THAT(error_of(d, kMinimal + "[larvae]\nmortality_per_day = -0.1\n"),
             Contains("mortality_per_day: must be between 0 and 100"));
  CHECK_THAT(error_of(d, kMinimal + "[motion]\nscheme = \"rk5\"\n"),
             Contains("did you mean \"rk4\""));
  CHECK_THAT(error_of(d, kMinimal + "[motion]\nkh_m2_s = nan\n"), Contains("kh_m2_s"));
  std::string bad_time = kMinimal;
  bad_time.replace(bad_time.find("2026-12-08T20"), 13, "2026-13-08T20");
  CHECK_THAT(error_of(d, bad_time), Contains("month 13 is not 1..12"));
  std::string zero_larvae = kMinimal;
  zero_larvae.replace(zero_larvae.find("larvae_per_reef = 100"), 21, "larvae_per_reef = 0");
  CHECK_THAT(error_of(d, zero_larvae), Contains("larvae_per_reef: must be between 1"));
}

TEST_CASE("missing files are named") {
  ScenarioDir d;
  std::string no_match = kMinimal;
  no_match.replace(no_match.find("currents/*.nc"), 13, "hydro/*.nc");
  CHECK_THAT(error_of(d, no_match), Contains("no file matches \"hydro/*.nc\""));
  std::string no_layer = kMinimal;
  no_layer.replace(no_layer.find("reefs.geojson"), 13, "reefs.gpkg");
  CHECK_THAT(error_of(d, no_layer), Contains("[reefs] layer: file not found"));
  LoadOptions relaxed;
  relaxed.check_files = false;
  CHECK_NOTHROW(load_study(d.write(no_layer), relaxed));
  CHECK_THROWS_WITH(load_study(d.dir / "nope.toml"), Contains("cannot open scenario file"));
}

TEST_CASE("unquoted TOML date-times and UTC offsets are accepted") {
  ScenarioDir d;
  std::string text = kMinimal;
  text.replace(text.find("\"2026-12-08T20:00:00Z\""), 22, "2026-12-09T06:00:00+10:00");
  const auto s = load_study(d.write(text));
  CHECK(s.spawning[0].start == cullcast::CivilTime{2026, 12, 8, 20, 0, 0.0});
}

TEST_CASE("overrides from the command line (--set) reach every kind of key through the same checks") {
  ScenarioDir d;
  const fs::path file = d.write(kMinimal + "[[spawning]]\nstart = \"2027-01-05T21:00:00Z\"\n");
  LoadOptions o;
  o.overrides = {"motion.dt_minutes=30", "study.name=variant b", "spawning.hours=4",
                 "spawning.2.larvae_per_reef=50", "outputs.dir=runs/b", "larvae.settle_rate_per_day=2"};
  auto s = load_study(file, o);
  CHECK(s.motion.dt_minutes == 30.0);
  CHECK(s.study.name == "variant b");
  CHECK(s.spawning[0].hours == 4.0);
  CHECK(s.spawning[1].hours == 4.0);
  CHECK(s.spawning[0].larvae_per_reef == 100);
  CHECK(s.spawning[1].larvae_per_reef == 50);
  CHECK(s.outputs.dir == (d.dir / "runs/b").lexically_normal());
  CHECK(s.larvae.settle_rate_per_day == 2.0);
  CHECK(s.overrides.size() == 6);

  o.overrides = {"motion.dt_minuts=5"};
  CHECK_THROWS_WITH(load_study(file, o), Contains("(--set)") && Contains("did you mean 'dt_minutes'"));
  o.overrides = {"motion.dt_minutes=-1"};
  CHECK_THROWS_WITH(load_study(file, o), Contains("dt_minutes: must be a positive"));
  o.overrides = {"spawning.3.hours=1"};
  CHECK_THROWS_WITH(load_study(file, o), Contains("there is no [[spawning]] block 3"));
  o.overrides = {"motiondt=5"};
  CHECK_THROWS_WITH(load_study(file, o), Contains("expected section.key=value"));
  o.overrides = {"motion.dt_minutes"};
  CHECK_THROWS_WITH(load_study(file, o), Contains("expected section.key=value"));
}
