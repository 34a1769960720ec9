#pragma once
// What a comparison needs from one run's output folder (docs/formats.md):
// the ensemble rows of connectivity.csv, reef_metrics.csv, and (when the run
// had a [cull] section) cull_ranking.csv and cull_curve.csv.
#include <cstdint>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

namespace cullcast::compare {

struct LinkEstimate {  // one "all" row of connectivity.csv
  std::string source_id, sink_id;
  std::int64_t released = 0;  // particles released by the source, all events
  std::int64_t settlers = 0;  // settling particles, all events
  double probability = 0;     // larvae represented settling / released (weighted), pooled
};

struct ReefRoleRow {  // one row of reef_metrics.csv
  std::string reef_id;
  std::string role;            // source | sink | exchange | isolated
  double export_strength = 0;  // larvae, units of larval output
  double import_strength = 0;
};

struct PlanRow {  // one row of cull_ranking.csv
  int rank = 0;   // 1 = first
  std::string reef_id;
  double effort_days = 0;  // vessel-days
  double averted_pct = 0;  // % of weighted settlement on priority reefs
};

struct RunOutputs {
  std::filesystem::path dir;
  std::vector<LinkEstimate> links;               // in file order
  std::map<std::string, std::int64_t> released;  // per source, all events (from any row)
  std::int64_t uniform_released = -1;  // released per source when all sources agree, else -1
  std::vector<ReefRoleRow> reefs;      // layer order
  bool has_plan = false;               // cull_ranking.csv present
  std::vector<PlanRow> plan;           // rank order
  double plan_averted_pct = 0;         // last cumulative_pct (0 for an empty plan)
  double curve_averted = 0;            // weighted larvae averted at the full budget
  double budget_days = 0;              // the full budget, vessel-days

  // Particles released by a source: from its rows, else uniform_released, else -1.
  std::int64_t released_by(const std::string& source_id) const;
};

// Throws InputError naming the folder, the missing file and the command that
// writes it, or the file, line and column of a malformed value.
RunOutputs read_run_outputs(const std::filesystem::path& dir);

}  // namespace cullcast::compare
