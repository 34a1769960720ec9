// Sweep plans: [[variant]] blocks, [sweep] vary and --vary grids, names,
// drift keys, and overrides checked exactly like --set (same messages).
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <string>

#include "cullcast/base/error.hpp"
#include "cullcast/study/load_study.hpp"
#include "cullcast/study/sweep_plan.hpp"

namespace fs = std::filesystem;
using namespace cullcast::study;
using Catch::Matchers::Contains;
using Catch::Matchers::StartsWith;

namespace {

struct SweepDir {
  fs::path dir;
  SweepDir() {
    dir = fs::temp_directory_path() /
          ("cullcast-sweep-" + std::to_string(reinterpret_cast<std::uintptr_t>(this)));
    fs::create_directories(dir / "currents");
    std::ofstream(dir / "currents" / "a.nc") << "x";
    std::ofstream(dir / "reefs.geojson") << "{}";
  }
  ~SweepDir() {
    std::error_code ignored;
    fs::remove_all(dir, ignored);
  }
  fs::path write(const std::string& extra) const {
    const fs::path p = dir / "s.toml";
    std::ofstream(p) << R"([currents]
files = ["currents/*.nc"]
[reefs]
layer = "reefs.geojson"
[[spawning]]
start = "2026-12-08T20:00:00Z"
larvae_per_reef = 100
[[spawning]]
start = "2026-12-10T20:00:00Z"
larvae_per_reef = 100
[outputs]
dir = "out"
)" << extra;
    return p;
  }
  std::string error_of(const std::string& extra, const std::vector<std::string>& vary = {}) const {
    try {
      read_sweep_plan(write(extra), {}, vary);
    } catch (const cullcast::InputError& e) {
      return e.what();
    }
    return "no error";
  }
};

}  // namespace

TEST_CASE("variants: baseline first, overrides normalised, outputs below the scenario's",
          "[study]") {
  SweepDir d;
  const fs::path s = d.write(R"(
[[variant]]
name = "short-pld"
set = ["larvae.precompetent_days = 10", "motion.kh_m2_s=2.0"]

[[variant]]
name = "more-boats"
set = ["cull.vessel_days = 20.0", "spawning.2.larvae_per_reef = 50"]
)");
  const SweepPlan plan = read_sweep_plan(s, {}, {});
  REQUIRE(plan.variants.size() == 3);
  CHECK(plan.variants[0].name == "baseline");
  CHECK(plan.variants[0].overrides.empty());
  CHECK(plan.variants[1].overrides ==
        std::vector<std::string>{"larvae.precompetent_days=10", "motion.kh_m2_s=2.0"});
  CHECK(plan.outputs_dir == (d.dir / "out").lexically_normal());
  CHECK_THAT(plan.variants[1].where, StartsWith(s.string() + ":"));
  const Study v = load_variant(s, {}, plan, plan.variants[1]);
  CHECK(v.larvae.precompetent_days == 10.0);
  CHECK(v.motion.kh_m2_s == 2.0);
  CHECK(v.outputs.dir == plan.outputs_dir / "short-pld");
  const Study w = load_variant(s, {"spawning.larvae_per_reef=30"}, plan, plan.variants[2]);
  CHECK(w.spawning[0].larvae_per_reef == 30);  // command line first, variant after
  CHECK(w.spawning[1].larvae_per_reef == 50);
}

TEST_CASE("a variant's study equals the study loaded with the same --set items", "[study]") {
  SweepDir d;
  const fs::path s =
      d.write("[[variant]]\nname = \"v\"\nset = [\"larvae.mortality_per_day = 0.2\"]\n");
  const SweepPlan plan = read_sweep_plan(s, {}, {});
  const Study v = load_variant(s, {}, plan, plan.variants[1]);
  LoadOptions o;
  o.overrides = {"larvae.mortality_per_day=0.2",
                 "outputs.dir=\"" + (plan.outputs_dir / "v").string() + "\""};
  const Study direct = load_study(s, o);
  CHECK(v.larvae.mortality_per_day == direct.larvae.mortality_per_day);
  CHECK(v.outputs.dir == direct.outputs.dir);
  CHECK(v.overrides == direct.overrides);
}

TEST_CASE("grid over two settings: every combination, named by key and value", "[study]") {
  SweepDir d;
  const fs::path s = d.write(R"(
[sweep]
baseline = false
vary."larvae.precompetent_days" = [10.0, 14.0, 18.0]
)");
  const SweepPlan plan = read_sweep_plan(s, {}, {"motion.kh_m2_s=0.5, 2"});
  REQUIRE(plan.variants.size() == 6);
  CHECK(plan.variants[0].name == "precompetent_days-10.0__kh_m2_s-0.5");
  CHECK(plan.variants[0].overrides ==
        std::vector<std::string>{"larvae.precompetent_days=10.0", "motion.kh_m2_s=0.5"});
  CHECK(plan.variants[5].name == "precompetent_days-18.0__kh_m2_s-2");
}

TEST_CASE("drift keys ignore [connectivity] and [cull] overrides", "[study]") {
  SweepVariant a{"a", {"cull.vessel_days=3", "motion.kh_m2_s=2"}, "", {}};
  SweepVariant b{"b", {"motion.kh_m2_s=2", "connectivity.confidence=0.9"}, "", {}};
  SweepVariant c{"c", {"motion.kh_m2_s=3"}, "", {}};
  CHECK(drift_key(a) == drift_key(b));
  CHECK(drift_key(a) != drift_key(c));
  CHECK(drift_key(SweepVariant{"d", {"cull.vessel_days=3"}, "", {}}).empty());
}

TEST_CASE("sweep errors: the same checks as --set, with the variant and its location", "[study]") {
  SweepDir d;
  // a misspelt key: the loader's own message with its suggestion
  const std::string e1 =
      d.error_of("[[variant]]\nname = \"x\"\nset = [\"larvae.precompetent_dayz = 3\"]\n");
  CHECK_THAT(e1, Contains("s.toml:15:8: variant \"x\", override \"larvae.precompetent_dayz=3\""));
  CHECK_THAT(
      e1, Contains("[larvae] unknown key 'precompetent_dayz' (did you mean 'precompetent_days'?)"));
  // a value out of range
  CHECK_THAT(d.error_of("[[variant]]\nname = \"x\"\nset = [\"motion.kh_m2_s = -1\"]\n"),
             Contains("[motion] kh_m2_s"));
  // an unknown section in the override
  CHECK_THAT(d.error_of("[[variant]]\nname = \"x\"\nset = [\"moton.kh_m2_s = 1\"]\n"),
             Contains("unknown section [moton] (did you mean [motion]?)"));
  CHECK_THAT(d.error_of("[[variant]]\nname = \"x\"\nset = [\"spawning.3.hours = 1\"]\n"),
             Contains("there is no [[spawning]] block 3"));
  CHECK_THAT(d.error_of("[[variant]]\nname = \"a/b\"\nset = [\"motion.kh_m2_s = 1\"]\n"),
             Contains("[variant] name: \"a/b\" cannot be a folder name"));
  CHECK_THAT(d.error_of("[[variant]]\nname = \"a\"\nset = [\"motion.kh_m2_s = "
                        "1\"]\n[[variant]]\nname = \"a\"\nset = [\"motion.kh_m2_s = 3\"]\n"),
             Contains("two variants are named \"a\""));
  CHECK_THAT(d.error_of("[[variant]]\nname = \"a\"\nsets = [\"motion.kh_m2_s = 1\"]\n"),
             Contains("[variant] missing required key 'set'"));
  CHECK_THAT(d.error_of("[sweep]\nbaseline = false\n"), Contains("nothing to sweep"));
  CHECK_THAT(d.error_of("[sweep]\nvarry = 1\n"),
             Contains("[sweep] unknown key 'varry' (did you mean 'vary'?)"));
  CHECK_THAT(d.error_of("", {"a.b=1", "c.d=2", "e.f=3"}),
             Contains("a grid varies at most two settings"));
  CHECK_THAT(d.error_of("", {"motion.kh_m2_s=1,,2"}),
             Contains("--vary \"motion.kh_m2_s=1,,2\": empty value"));
  CHECK_THAT(d.error_of("", {"motion.kh_m2_z=1,2"}),
             Contains("unknown key 'kh_m2_z' (did you mean 'kh_m2_s'?)"));
  CHECK_THAT(d.error_of("[sweep]\nvary.\"motion.kh_m2_s\" = 2\n"),
             Contains("expected a non-empty array"));
}

TEST_CASE("a scenario with [sweep] and [[variant]] still loads for run", "[study]") {
  SweepDir d;
  LoadOptions o;
  CHECK_NOTHROW(load_study(
      d.write(
          "[[variant]]\nname = \"x\"\nset = [\"motion.kh_m2_s = 2\"]\n[sweep]\nbaseline = true\n"),
      o));
}
