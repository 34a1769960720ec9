#pragma once
// Run folders written the way the stages write them (the columns of
// docs/formats.md), for the comparison tests.
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

namespace cullcast::compare::test {

struct FakeLink {
  std::string source, sink;
  long released, settlers;
  double probability;
};

struct FakePlanRow {
  std::string reef;
  double effort_days, averted_pct;
};

// A temporary folder removed at the end of the test.
struct TempDir {
  std::filesystem::path path;
  explicit TempDir(const std::string& name) {
    path =
        std::filesystem::temp_directory_path() /
        ("cullcast-compare-" + name + "-" + std::to_string(reinterpret_cast<std::uintptr_t>(this)));
    std::filesystem::remove_all(path);
    std::filesystem::create_directories(path);
  }
  ~TempDir() {
    std::error_code e;
    std::filesystem::remove_all(path, e);
  }
};

inline void write_run(const std::filesystem::path& dir, const std::vector<FakeLink>& links,
                      const std::vector<std::pair<std::string, std::string>>& roles,
                      const std::vector<FakePlanRow>& plan, bool with_plan = true) {
  std::filesystem::create_directories(dir);
  {
    std::ofstream c(dir / "connectivity.csv");
    c << "source_id,sink_id,event,released,settled,probability,settlers,wilson_low,wilson_high,"
         "mean,sd,cv,"
         "min,max,q0.05,q0.5,q0.95\n";
    for (const auto& l :
         links) {  // one event row (with the writer's extra empty field), then "all"
      c << l.source << ',' << l.sink << ",0," << l.released << ',' << l.probability * l.released
        << ',' << l.probability << ',' << l.settlers << ",0,1,,,,,,,,,\n";
      c << l.source << ',' << l.sink << ",all," << l.released << ',' << l.probability * l.released
        << ',' << l.probability << ',' << l.settlers << ",0,1," << l.probability << ",0,0,"
        << l.probability << ',' << l.probability << ',' << l.probability << ',' << l.probability
        << ',' << l.probability << "\n";
    }
  }
  {
    std::ofstream m(dir / "reef_metrics.csv");
    m << "reef_id,larval_output,local_retention,self_recruitment,settlement_success,export_"
         "strength,"
         "import_strength,out_degree,in_degree,betweenness,component,component_size,reach_3,role\n";
    for (const auto& [id, role] : roles) {
      m << id << ",1,0,0,0," << (role == "source" ? 2 : 0.5) << ',' << (role == "sink" ? 2 : 0.5)
        << ",0,0,0,0,1,0," << role << "\n";
    }
  }
  if (!with_plan) return;
  std::ofstream r(dir / "cull_ranking.csv");
  r << "rank,reef_id,effort,recruits_averted,recruits_averted_pct,cumulative_pct,removed_fraction,"
       "adults,"
       "gain_per_vessel_day,averted_member_mean,averted_member_p10,in_best_plan_share,top_event_"
       "share,"
       "top_event,depends_on_one_night,explanation\n";
  double cumulative = 0;
  for (std::size_t i = 0; i < plan.size(); ++i) {
    cumulative += plan[i].averted_pct;
    r << i + 1 << ',' << plan[i].reef << ',' << plan[i].effort_days << ",1000,"
      << plan[i].averted_pct << ',' << cumulative
      << ",0.5,100,10,1000,500,1,0.5,\"night 1\",false,\"reason, with a comma\"\n";
  }
  std::ofstream curve(dir / "cull_curve.csv");
  curve << "budget_vessel_days,recruits_averted,recruits_averted_pct,cost_vessel_days,marginal_per_"
           "vessel_day,"
           "reefs,method\n0,0,0,0,0,0,greedy\n10,"
        << cumulative * 100 << ',' << cumulative << ",9,1," << plan.size() << ",greedy\n";
}

}  // namespace cullcast::compare::test
