// Scenario experiments end to end on the demo region (its own short currents,
// few larvae): `cullcast sweep` variants equal separate runs with the same
// --set overrides, byte for byte; two runs differing only by seed flag no more
// links than the test's false-positive rate allows; a run compared with itself
// shows nothing; `brief --previous` opens with what changed; `converge`
// recommends the particle count of its documented formula. (No ";" in case
// names: CTest would cut the name there and run nothing.)
#include <sys/wait.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <regex>
#include <sstream>
#include <string>

#include "cullcast/compare/convergence.hpp"

namespace fs = std::filesystem;
using Catch::Matchers::Contains;

namespace {

std::string read_all(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

std::map<std::string, std::string> summary(const fs::path& p) {  // quantity,value rows
  std::map<std::string, std::string> m;
  std::istringstream in(read_all(p));
  std::string line;
  while (std::getline(in, line)) {
    const auto comma = line.find(',');
    if (comma != std::string::npos) m[line.substr(0, comma)] = line.substr(comma + 1);
  }
  return m;
}

// A copy of the demo scenario with absolute paths, short currents and few
// larvae (40 per reef and event, competent for 6 days), plus two variants.
struct DemoStudy {
  fs::path dir;
  DemoStudy(const std::string& name, int days) {
    dir = fs::temp_directory_path() / ("cullcast-experiments-" + name);
    fs::remove_all(dir);
    fs::create_directories(dir);
    REQUIRE(run("-q demo-data --days " + std::to_string(days) + " " +
                (dir / "currents").string()) == 0);
    const fs::path demo = fs::path(CULLCAST_SOURCE_DIR) / "scenarios";
    std::string text = read_all(demo / "lantern-reach.toml");
    text = std::regex_replace(text, std::regex("\"lantern-reach/currents/\\*\\.nc\""),
                              "\"" + (dir / "currents").string() + "/*.nc\"");
    text = std::regex_replace(text, std::regex("\"lantern-reach/"),
                              "\"" + (demo / "lantern-reach").string() + "/");
    text = std::regex_replace(text, std::regex("dir = \"[^\"]*\""),
                              "dir = \"" + (dir / "out").string() + "\"");
    text = std::regex_replace(text, std::regex("larvae_per_reef = 300"), "larvae_per_reef = 40");
    text = std::regex_replace(text, std::regex("competent_days = 29.0"), "competent_days = 6.0");
    text +=
        "\n[[variant]]\nname = \"other-seed\"\nset = [\"study.seed = 7\"]\n"
        "\n[[variant]]\nname = \"more-boats\"\nset = [\"cull.vessel_days = 18.0\"]\n";
    std::ofstream(dir / "s.toml") << text;
  }
  ~DemoStudy() {
    std::error_code ignored;
    fs::remove_all(dir, ignored);
  }
  int run(const std::string& args) const {
    const std::string cmd = std::string(CULLCAST_EXE) + " " + args + " >" +
                            (dir / "stdout").string() + " 2>" + (dir / "stderr").string();
    return WEXITSTATUS(std::system(cmd.c_str()));
  }
  std::string out() const { return read_all(dir / "stdout"); }
  std::string scenario() const { return (dir / "s.toml").string(); }
};

}  // namespace

TEST_CASE(
    "sweep variants equal separate runs and seed-only differences stay within the false-positive rate",
    "[slow]") {
  fs::create_directories(fs::temp_directory_path());
  DemoStudy d("sweep", 27);
  const fs::path out = d.dir / "out";
  REQUIRE(d.run("sweep " + d.scenario()) == 0);
  const std::string log = d.out();
  CHECK_THAT(log, Contains("[1/3] baseline"));
  CHECK_THAT(log, Contains("[3/3] more-boats: cull.vessel_days=18.0 (drift shared with baseline)"));
  CHECK_THAT(log, Contains("Sweep finished"));
  const std::string table = read_all(out / "sweep_summary.csv");
  CHECK_THAT(table, Contains("\"more-boats\",\"cull.vessel_days=18.0\",\"baseline\","));

  // Separate runs with the same --set overrides give the same files, byte for byte.
  REQUIRE(d.run("-q --set study.seed=7 --set outputs.dir=" + (d.dir / "separate-seed").string() +
                " run " + d.scenario()) == 0);
  REQUIRE(d.run("-q --set cull.vessel_days=18.0 --set outputs.dir=" +
                (d.dir / "separate-boats").string() + " run " + d.scenario()) == 0);
  for (const char* file : {"settlement.csv", "connectivity.csv", "reef_metrics.csv",
                           "stepping_stones.csv", "cull_ranking.csv", "cull_curve.csv"}) {
    INFO(file);
    const std::string variant = read_all(out / "other-seed" / file);
    CHECK(!variant.empty());
    CHECK(variant == read_all(d.dir / "separate-seed" / file));
    CHECK(read_all(out / "more-boats" / file) == read_all(d.dir / "separate-boats" / file));
  }

  // Only the seed differs: every flagged link is a false positive. Under the
  // null hypothesis the count is at most binomial(m, alpha) (the z-test is
  // conservative for small counts); allow its mean + 3 standard deviations
  // (normal approximation to the binomial; common practice, no source).
  const auto seed = summary(out / "other-seed" / "vs_baseline_summary.csv");
  const double m = std::stod(seed.at("links_tested")), alpha = std::stod(seed.at("alpha"));
  const double flagged = std::stod(seed.at("links_significant"));
  INFO("flagged " << flagged << " of " << m);
  CHECK(m > 100);
  CHECK(flagged <= alpha * m + 3 * std::sqrt(alpha * (1 - alpha) * m));
  // The cull-only variant shares the drift: every link count identical.
  const auto boats = summary(out / "more-boats" / "vs_baseline_summary.csv");
  CHECK(boats.at("links_significant") == "0");
  CHECK(read_all(out / "more-boats" / "settlement.nc") ==
        read_all(out / "baseline" / "settlement.nc"));

  // A run compared with itself: no difference, tau = 1.
  REQUIRE(d.run("compare " + (out / "baseline").string() + " " + (out / "baseline").string() +
                " --out " + (d.dir / "self").string()) == 0);
  const auto self = summary(d.dir / "self" / "comparison_summary.csv");
  CHECK(self.at("links_significant") == "0");
  CHECK(self.at("roles_changed") == "0");
  CHECK(self.at("kendall_tau_b") == "1");
  CHECK(self.at("entered_plan").empty());
  CHECK_THAT(read_all(d.dir / "self" / "comparison.html"), Contains("No difference"));

  // brief --previous: the page opens with what changed since the last plan.
  REQUIRE(d.run("-q --set outputs.dir=" + (out / "other-seed").string() + " brief " + d.scenario() +
                " --previous " + (out / "baseline").string()) == 0);
  const std::string html = read_all(out / "other-seed" / "briefing.html");
  const auto changed = html.find("<h2>What changed since the last plan</h2>");
  REQUIRE(changed != std::string::npos);
  CHECK(changed < html.find("<h2>1. "));
  CHECK(fs::exists(out / "other-seed" / "changes_since_previous_links.csv"));
  // --previous naming the outputs folder itself keeps its plan in previous-plan/ first
  REQUIRE(d.run("-q --set outputs.dir=" + (out / "baseline").string() + " brief " + d.scenario() +
                " --previous " + (out / "baseline").string()) == 0);
  CHECK(fs::exists(out / "baseline" / "previous-plan" / "connectivity.csv"));
  CHECK_THAT(read_all(out / "baseline" / "briefing.html"), Contains("No difference"));

  // Errors: a misspelt key in a grid axis is caught before anything runs.
  CHECK(d.run("sweep " + d.scenario() + " --vary larvae.precompetent_dayz=10,12") == 3);
  CHECK_THAT(read_all(d.dir / "stderr"), Contains("did you mean 'precompetent_days'?"));
  CHECK(d.run("compare " + (out / "baseline").string() + " " + (d.dir / "nowhere").string()) == 3);
  CHECK_THAT(read_all(d.dir / "stderr"), Contains("not a folder"));
}

TEST_CASE("converge reruns with twice the larvae and recommends Cochran's count", "[slow]") {
  DemoStudy d("converge", 27);
  REQUIRE(d.run("--set spawning.larvae_per_reef=20 converge " + d.scenario() +
                " --precision 0.25 --probability 0.01") == 0);
  const std::string log = d.out();
  const fs::path dir = d.dir / "out" / "convergence";
  CHECK(fs::exists(dir / "base" / "connectivity.csv"));
  CHECK(fs::exists(dir / "doubled" / "connectivity.csv"));
  CHECK(fs::exists(dir / "comparison_links.csv"));
  // The doubled run released twice the particles per source (3 events x 40).
  CHECK_THAT(read_all(dir / "doubled" / "connectivity.csv"), Contains(",all,120,"));
  const long n = cullcast::compare::particles_for_precision(0.01, 0.25, 0.95);
  CHECK(n == static_cast<long>(
                 std::ceil(1.959963984540054 * 1.959963984540054 * 0.99 / (0.0625 * 0.01))));
  CHECK_THAT(log, Contains("= " + std::to_string(n) + " larvae over all events, i.e. " +
                           std::to_string((n + 2) / 3) + " larvae per reef per event"));
  CHECK_THAT(log, Contains("still move by more than 25 %"));
}
