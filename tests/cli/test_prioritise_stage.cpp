// End to end: settlement records written as real NetCDF by the drift stage's
// writer, `cullcast prioritise` run as a program, its CSV outputs read back.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "../support/settlement_file.hpp"
#include "../support/scratch_folder.hpp"

namespace fs = std::filesystem;
using Catch::Matchers::Contains;
using cullcast::test::read_all;

namespace {

std::vector<std::vector<std::string>> read_csv(const fs::path& p) {  // no quoted commas in the checked columns
  std::vector<std::vector<std::string>> rows;
  std::ifstream in(p);
  std::string line;
  while (std::getline(in, line)) {
    std::vector<std::string> f;
    std::stringstream s(line);
    std::string x;
    while (std::getline(s, x, ',')) f.push_back(x);
    rows.push_back(f);
  }
  return rows;
}

// Four invented reefs: P-3 is the priority reef; R-0 feeds it directly, R-1
// only through R-2 (a stepping stone), and R-0 feeds nothing else.
std::string reef_geojson() {
  std::ostringstream s;
  s << R"({"type":"FeatureCollection","features":[)";
  const char* ids[4] = {"R-0", "R-1", "R-2", "P-3"};
  for (int i = 0; i < 4; ++i) {
    const double x = 150.0 + 0.1 * i, y = -20.0;
    s << (i ? "," : "") << R"({"type":"Feature","properties":{"id":")" << ids[i] << R"(","priority":)"
      << (i == 3 ? 1.0 : 0.0) << R"(},"geometry":{"type":"Polygon","coordinates":[[)"
      << "[" << x << "," << y << "],[" << x + 0.01 << "," << y << "],[" << x + 0.01 << ","
      << y + 0.01 << "],[" << x << "," << y + 0.01 << "],[" << x << "," << y << "]]]}}";
  }
  s << "]}";
  return s.str();
}

// Settlers per source (row) and reef (column), two events of 1000 particles.
const std::vector<std::vector<std::vector<int>>> kSettlers = {
    {{50, 0, 0, 40}, {0, 60, 30, 0}, {0, 0, 50, 20}, {0, 0, 0, 100}},
    {{50, 0, 0, 5}, {0, 60, 40, 0}, {0, 0, 50, 30}, {0, 0, 0, 100}}};

// Every record released at time 0 and settled 20 days later; of each source's
// 1000 particles per event, 60 lost and 40 still drifting at the end.
void write_settlement(const fs::path& file) {
  cullcast::test::SettlementPlan plan;
  plan.reef_ids = {"R-0", "R-1", "R-2", "P-3"};
  plan.event_starts_s = {0.0, 30 * 86400.0};
  plan.release_s = {0.0, 0.0};
  plan.settlers = kSettlers;
  plan.lost = 60;
  plan.drifting = 40;
  cullcast::test::write_settlement(file, plan);
}

struct Workspace : cullcast::test::ScratchFolder {
  Workspace() : ScratchFolder("prioritise") {
    fs::create_directories(dir / "currents");
    std::ofstream(dir / "currents" / "a.nc") << "x";  // the loader only checks that it exists
    std::ofstream(dir / "reefs.geojson") << reef_geojson();
    std::ofstream(dir / "surveys.csv") << "reef_id,density_per_ha,count_15_25cm,count_25cm_plus\n"
                                          "R-0,40,2,8\nR-1,60,,\nR-2,10,,\nP-3,5,,\n";
    std::ofstream(dir / "s.toml") << R"([study]
name = "prioritise test"
[currents]
files = ["currents/*.nc"]
[reefs]
layer = "reefs.geojson"
priority = "priority"
surveys = "surveys.csv"
[[spawning]]
start = "2026-12-08T20:00:00Z"
[outputs]
dir = "out"
[cull]
vessel_days = 3
effort_step_days = 0.5
max_days_per_reef = 2
home_lon = 149.9
home_lat = -20.0
horizon_seasons = 4
maturation_seasons = 2
)";
  }
};

}  // namespace

TEST_CASE("prioritise without settlement records says to run disperse first") {
  Workspace w;
  CHECK(w.run("prioritise " + (w.dir / "s.toml").string()) == 3);  // docs/exit-codes.md: bad input
  CHECK_THAT(read_all(w.dir / "stderr"), Contains("cullcast disperse"));
  CHECK_FALSE(fs::exists(w.dir / "out" / "cull_ranking.csv"));
}

TEST_CASE("prioritise ranks cull sites from a real settlement file") {
  Workspace w;
  fs::create_directories(w.dir / "out");
  write_settlement(w.dir / "out" / "settlement.nc");
  REQUIRE(w.run("prioritise " + (w.dir / "s.toml").string()) == 0);
  const std::string out = read_all(w.dir / "stdout");
  CHECK_THAT(out, Contains("decision support with stated uncertainty; field work follows local dive-safety "
                           "codes, permits and licensed practice"));
  CHECK_THAT(out, Contains("P-3"));

  const auto rank = read_csv(w.dir / "out" / "cull_ranking.csv");
  REQUIRE(rank.size() >= 2);
  const std::vector<std::string> head = {"rank", "reef_id", "effort", "recruits_averted",
                                         "recruits_averted_pct", "cumulative_pct"};
  for (std::size_t k = 0; k < head.size(); ++k) CHECK(rank[0][k] == head[k]);
  double cumulative = 0, effort = 0;
  for (std::size_t r = 1; r < rank.size(); ++r) {
    CHECK(std::stoi(rank[r][0]) == static_cast<int>(r));
    cumulative += std::stod(rank[r][4]);
    CHECK(std::stod(rank[r][5]) == Approx(cumulative).epsilon(1e-4));
    effort += std::stod(rank[r][2]);
  }
  CHECK(effort <= 3.0);
  bool has_direct_feeder = false;  // R-0 sends the most larvae straight to P-3
  for (std::size_t r = 1; r < rank.size(); ++r) has_direct_feeder |= rank[r][1] == "R-0";
  CHECK(has_direct_feeder);
  CHECK(cumulative > 0);
  CHECK(cumulative <= 100.0);

  const auto curve = read_csv(w.dir / "out" / "cull_curve.csv");
  REQUIRE(curve.size() >= 3);
  CHECK(curve[0][0] == "budget_vessel_days");
  CHECK(std::stod(curve[1][1]) == 0.0);  // no budget, nothing averted
  for (std::size_t r = 2; r < curve.size(); ++r) CHECK(std::stod(curve[r][1]) >= std::stod(curve[r - 1][1]));
  CHECK(std::stod(curve.back()[2]) == Approx(cumulative).epsilon(1e-4));
}
