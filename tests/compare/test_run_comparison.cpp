// Comparison of two run folders: identity, a known change, plan changes, the
// CSV files read back, and errors that name the file and line.
#include <catch2/catch.hpp>
#include <fstream>
#include <sstream>

#include "compare_test_support.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/compare/run_comparison.hpp"

using namespace cullcast::compare;
using namespace cullcast::compare::test;
using Catch::Detail::Approx;
using Catch::Matchers::Contains;

namespace {

const std::vector<std::pair<std::string, std::string>> kRoles = {
    {"R1", "source"}, {"R2", "sink"}, {"R3", "exchange"}, {"R4", "sink"}};

std::vector<FakeLink> base_links() {
  return {{"R1", "R2", 900, 120, 0.05},
          {"R1", "R3", 900, 30, 0.012},
          {"R2", "R3", 900, 5, 0.002},
          {"R3", "R4", 900, 60, 0.03}};
}

std::string read_all(const std::filesystem::path& p) {
  std::ifstream in(p);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

}  // namespace

TEST_CASE("a run compared with itself: no difference and tau = 1", "[compare]") {
  TempDir a("self");
  write_run(a.path, base_links(), kRoles, {{"R1", 2, 30}, {"R3", 1, 12}, {"R2", 1, 5}});
  const RunOutputs r = read_run_outputs(a.path);
  const RunComparison c = compare_runs(r, r);
  CHECK(c.identical());
  CHECK(c.links.size() == 4);
  CHECK(c.links_tested == 4);
  CHECK(c.links_significant == 0);
  CHECK(c.roles_changed == 0);
  REQUIRE(c.plans);
  CHECK(c.tau.tau == Approx(1));
  CHECK(c.entered.empty());
  CHECK(c.left.empty());
  CHECK(c.averted_pct_b - c.averted_pct_a == 0);
  for (const auto& l : c.links) {
    CHECK(l.test.z == 0);
    CHECK(l.difference() == 0);
  }
}

TEST_CASE("a doubled link is flagged, an unchanged one is not", "[compare]") {
  TempDir a("a"), b("b");
  auto links = base_links();
  write_run(a.path, links, kRoles, {{"R1", 2, 30}, {"R3", 1, 12}, {"R2", 1, 5}});
  links[0].settlers = 240;  // R1 -> R2 doubled: z about 8
  links[0].probability = 0.1;
  links.push_back({"R4", "R1", 900, 3, 0.001});  // a new link, absent (0 settlers) in A
  auto roles = kRoles;
  roles[3].second = "source";
  write_run(b.path, links, roles, {{"R3", 2, 20}, {"R1", 2, 25}, {"R4", 1, 3}});
  const RunComparison c = compare_runs(read_run_outputs(a.path), read_run_outputs(b.path));
  CHECK_FALSE(c.identical());
  REQUIRE(c.links.size() == 5);
  const LinkChange& top = c.links.front();  // sorted by p-value
  CHECK(top.source_id == "R1");
  CHECK(top.sink_id == "R2");
  CHECK(top.significant);
  CHECK(top.significant_fdr);
  CHECK(top.difference() == Approx(0.05));
  CHECK(top.test.z == Approx(two_proportion_z(120, 900, 240, 900).z));
  for (const auto& l : c.links) {
    if (l.source_id == "R4") {
      CHECK(l.released_a == 900);  // from the other links of run A (uniform release)
      CHECK(l.settlers_a == 0);
      CHECK_FALSE(l.significant);  // 0 vs 3 of 900: p about 0.08
    }
    if (l.source_id == "R2") CHECK_FALSE(l.significant);
  }
  CHECK(c.links_significant == 1);
  CHECK(c.expected_false_positives == Approx(0.05 * c.links_tested));
  CHECK(c.roles_changed == 1);
  REQUIRE(c.entered == std::vector<std::string>{"R4"});
  REQUIRE(c.left == std::vector<std::string>{"R2"});
  // Ranks over R1 R3 R2 R4: A = 1 2 3 4(out), B = 2 1 4(out) 3.
  std::vector<std::string> ids;
  std::vector<double> ra, rb;
  rank_vectors(read_run_outputs(a.path), read_run_outputs(b.path), ids, ra, rb);
  CHECK(ids == std::vector<std::string>{"R1", "R3", "R2", "R4"});
  CHECK(ra == std::vector<double>{1, 2, 3, 4});
  CHECK(rb == std::vector<double>{2, 1, 4, 3});
  CHECK(c.tau.tau == Approx(kendall_tau_b(ra, rb).tau));
  CHECK(c.averted_pct_a == Approx(47));
  CHECK(c.averted_pct_b == Approx(48));
}

TEST_CASE("comparison CSV files hold one row per link and reef", "[compare]") {
  TempDir a("csv-a"), b("csv-b"), out("csv-out");
  write_run(a.path, base_links(), kRoles, {{"R1", 2, 30}});
  auto links = base_links();
  links[1].settlers = 60;
  write_run(b.path, links, kRoles, {{"R3", 2, 30}});
  const RunComparison c = compare_runs(read_run_outputs(a.path), read_run_outputs(b.path));
  const auto files = write_comparison_csv(out.path, "comparison", c);
  REQUIRE(files.size() == 3);
  const std::string l = read_all(out.path / "comparison_links.csv");
  CHECK_THAT(l, Contains("source_id,sink_id,released_a,settlers_a,probability_a,released_b"));
  CHECK(std::count(l.begin(), l.end(), '\n') == 5);  // header + 4 links
  CHECK_THAT(l, Contains("R1,R3,900,30,0.012,900,60,"));
  const std::string r = read_all(out.path / "comparison_reefs.csv");
  CHECK_THAT(r, Contains("R1,source,source,false,"));
  CHECK_THAT(r, Contains(",1,,,left\n"));
  CHECK_THAT(r, Contains(",,1,,entered\n"));
  const std::string s = read_all(out.path / "comparison_summary.csv");
  CHECK_THAT(s, Contains("links_tested,4\n"));
  CHECK_THAT(s, Contains("entered_plan,R3\n"));
  // no temporary files left behind (AtomicFile)
  int n = 0;
  for (const auto& e : std::filesystem::directory_iterator(out.path)) n += e.is_regular_file();
  CHECK(n == 3);
}

TEST_CASE("a run without a cull plan compares links and roles only", "[compare]") {
  TempDir a("noplan-a"), b("noplan-b");
  write_run(a.path, base_links(), kRoles, {}, false);
  write_run(b.path, base_links(), kRoles, {{"R1", 1, 10}});
  const RunComparison c = compare_runs(read_run_outputs(a.path), read_run_outputs(b.path));
  CHECK_FALSE(c.plans);
  CHECK_THAT(comparison_summary(c), Contains("not in both runs"));
}

TEST_CASE("bad run folders: errors name the folder, file, line and column", "[compare]") {
  TempDir a("bad");
  CHECK_THROWS_WITH(read_run_outputs(a.path / "missing"), Contains("not a folder"));
  CHECK_THROWS_WITH(read_run_outputs(a.path),
                    Contains("connectivity.csv not found (written by `cullcast connect`"));
  write_run(a.path, base_links(), kRoles, {{"R1", 2, 30}});
  {
    std::ofstream c(a.path / "connectivity.csv", std::ios::app);
    c << "R2,R4,all,900,1,0.001,many,0,1,0,0,0,0,0,0,0,0\n";
  }
  CHECK_THROWS_AS(read_run_outputs(a.path), cullcast::InputError);
  CHECK_THROWS_WITH(
      read_run_outputs(a.path),
      Contains("connectivity.csv line 10, column 'settlers': expected a number, found \"many\""));
  write_run(a.path, base_links(), kRoles, {{"R1", 2, 30}});
  {
    std::ofstream c(a.path / "reef_metrics.csv");
    c << "reef_id,export_strength,import_strength\nR1,1,2\n";
  }
  CHECK_THROWS_WITH(read_run_outputs(a.path),
                    Contains("reef_metrics.csv line 1: expected a column 'role'"));
}
