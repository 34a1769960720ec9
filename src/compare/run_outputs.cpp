#include "cullcast/compare/run_outputs.hpp"

#include <cmath>

#include "csv_rows.hpp"
#include "cullcast/base/error.hpp"

namespace cullcast::compare {
namespace fs = std::filesystem;

std::int64_t RunOutputs::released_by(const std::string& source_id) const {
  const auto it = released.find(source_id);
  if (it != released.end()) return it->second;
  return uniform_released;
}

namespace {

fs::path need(const fs::path& dir, const char* name, const char* command) {
  const fs::path p = dir / name;
  std::error_code error;
  if (!fs::is_regular_file(p, error)) {
    throw InputError("run folder " + dir.string() + ": " + name +
                     " not found (written by `cullcast " + command +
                     "`; is this a cullcast output folder?)");
  }
  return p;
}

void read_links(RunOutputs& r) {
  const csv::Table t = csv::read(need(r.dir, "connectivity.csv", "connect"));
  const int source = t.require_column("source_id"), sink = t.require_column("sink_id");
  const int event = t.require_column("event"), released = t.require_column("released");
  const int settlers = t.require_column("settlers"), probability = t.require_column("probability");
  std::map<std::string, std::int64_t> per_event_sum;  // for files without "all" rows
  for (const auto& row : t.rows) {
    const std::string& id = t.at(row, source);
    if (t.at(row, event) != "all") continue;
    LinkEstimate l;
    l.source_id = id;
    l.sink_id = t.at(row, sink);
    l.released = t.whole(row, released);
    l.settlers = t.whole(row, settlers);
    l.probability = t.number(row, probability);
    if (l.settlers > l.released) {
      throw InputError(t.file + " line " + std::to_string(row.line) + ": settlers (" +
                       std::to_string(l.settlers) + ") exceed released (" +
                       std::to_string(l.released) + ")");
    }
    r.released[id] = l.released;
    r.links.push_back(l);
  }
  std::int64_t common = -1;
  bool same = !r.released.empty();
  for (const auto& [id, n] : r.released) {
    if (common >= 0 && n != common) same = false;
    common = n;
  }
  r.uniform_released = same ? common : -1;
}

void read_roles(RunOutputs& r) {
  const csv::Table t = csv::read(need(r.dir, "reef_metrics.csv", "connect"));
  const int id = t.require_column("reef_id"), role = t.require_column("role");
  const int ex = t.require_column("export_strength"), im = t.require_column("import_strength");
  for (const auto& row : t.rows) {
    r.reefs.push_back({t.at(row, id), t.at(row, role), t.number(row, ex), t.number(row, im)});
  }
}

void read_plan(RunOutputs& r) {
  std::error_code error;
  if (!fs::is_regular_file(r.dir / "cull_ranking.csv", error)) return;
  r.has_plan = true;
  const csv::Table t = csv::read(r.dir / "cull_ranking.csv");
  const int rank = t.require_column("rank"), id = t.require_column("reef_id");
  const int effort = t.require_column("effort"), pct = t.require_column("recruits_averted_pct");
  const int cumulative = t.require_column("cumulative_pct");
  for (const auto& row : t.rows) {
    PlanRow p;
    p.rank = static_cast<int>(t.whole(row, rank));
    p.reef_id = t.at(row, id);
    p.effort_days = t.number(row, effort);
    p.averted_pct = t.number(row, pct);
    if (p.rank != static_cast<int>(r.plan.size()) + 1) {
      throw InputError(t.file + " line " + std::to_string(row.line) + ": expected rank " +
                       std::to_string(r.plan.size() + 1) + ", found " + t.at(row, rank));
    }
    r.plan_averted_pct = t.number(row, cumulative);
    r.plan.push_back(p);
  }
  const fs::path curve = r.dir / "cull_curve.csv";
  if (fs::is_regular_file(curve, error)) {
    const csv::Table c = csv::read(curve);
    const int budget = c.require_column("budget_vessel_days");
    const int averted = c.require_column("recruits_averted");
    if (!c.rows.empty()) {
      r.budget_days = c.number(c.rows.back(), budget);
      r.curve_averted = c.number(c.rows.back(), averted);
    }
  }
}

}  // namespace

RunOutputs read_run_outputs(const fs::path& dir) {
  RunOutputs r;
  r.dir = dir;
  std::error_code error;
  if (!fs::is_directory(dir, error)) {
    throw InputError("run folder " + dir.string() +
                     ": not a folder (give the outputs folder of a run)");
  }
  read_links(r);
  read_roles(r);
  read_plan(r);
  return r;
}

}  // namespace cullcast::compare
