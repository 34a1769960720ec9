#include "brief_stage.hpp"

#include <chrono>
#include <cmath>
#include <cstdlib>
#include <ctime>
#include <fstream>
#include <map>
#include <ostream>
#include <sstream>

#include "cullcast/base/error.hpp"
#include "cullcast/compare/run_comparison.hpp"
#include "cullcast/currents/current_field.hpp"
#include "cullcast/network/connectivity_matrix.hpp"
#include "cullcast/network/link_ensemble.hpp"
#include "cullcast/reefs/aggregations.hpp"
#include "cullcast/report/briefing_layers.hpp"
#include "cullcast/report/comparison_section.hpp"
#include "cullcast/report/sha256.hpp"

namespace cullcast::cli {
namespace fs = std::filesystem;
namespace {

// RFC 4180 records (quoted fields may hold commas, quotes and line breaks).
std::vector<std::vector<std::string>> read_csv(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) throw InputError("cannot read " + file.string());
  std::stringstream buf;
  buf << in.rdbuf();
  const std::string text = buf.str();
  std::vector<std::vector<std::string>> rows(1);
  std::string field;
  bool quoted = false;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    if (quoted) {
      if (c == '"' && i + 1 < text.size() && text[i + 1] == '"') {
        field += '"';
        ++i;
      } else if (c == '"') {
        quoted = false;
      } else {
        field += c;
      }
    } else if (c == '"') {
      quoted = true;
    } else if (c == ',') {
      rows.back().push_back(field);
      field.clear();
    } else if (c == '\n' || c == '\r') {
      if (c == '\r' && i + 1 < text.size() && text[i + 1] == '\n') ++i;
      rows.back().push_back(field);
      field.clear();
      rows.emplace_back();
    } else {
      field += c;
    }
  }
  if (!field.empty() || !rows.back().empty()) rows.back().push_back(field);
  if (rows.back().empty()) rows.pop_back();
  return rows;
}

// Column lookup by header name with messages that name file, line and column.
struct Table {
  fs::path file;
  std::vector<std::vector<std::string>> rows;
  std::map<std::string, std::size_t> cols;
  explicit Table(const fs::path& f) : file(f), rows(read_csv(f)) {
    if (rows.empty()) throw InputError(file.string() + ": empty file, expected a header line");
    for (std::size_t k = 0; k < rows[0].size(); ++k) cols[rows[0][k]] = k;
  }
  std::size_t col(const std::string& name) const {
    const auto it = cols.find(name);
    if (it == cols.end()) throw InputError(file.string() + ": no column '" + name + "' in the header");
    return it->second;
  }
  const std::string& text(std::size_t row, const std::string& name) const {
    const std::size_t k = col(name);
    if (k >= rows[row].size()) {
      throw InputError(file.string() + " line " + std::to_string(row + 1) + ": missing column '" + name + "'");
    }
    return rows[row][k];
  }
  double number(std::size_t row, const std::string& name) const {
    const std::string& t = text(row, name);
    if (t.empty() || t == "nan" || t == "n/a") return std::nan("");
    char* end = nullptr;
    const double v = std::strtod(t.c_str(), &end);
    if (end == t.c_str() || *end != '\0') {
      throw InputError(file.string() + " line " + std::to_string(row + 1) + ", column '" + name +
                       "': expected a number, found \"" + t + "\"");
    }
    return v;
  }
};

std::string utc_now() {
  std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  if (const char* epoch = std::getenv("SOURCE_DATE_EPOCH")) t = static_cast<std::time_t>(std::atoll(epoch));
  std::tm tm{};
  gmtime_r(&t, &tm);
  char b[32];
  std::strftime(b, sizeof b, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return b;
}

std::string read_text(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

void add_input(report::BriefingData& d, const std::string& role, const fs::path& p) {
  if (p.empty() || !fs::exists(p)) return;
  d.inputs.push_back({role, p, fs::file_size(p), report::sha256_file(p)});
}

std::string need(const fs::path& file, const char* command, const study::Study& study) {
  if (!fs::exists(file)) {
    throw InputError(file.filename().string() + " not found in " + file.parent_path().string() + "; run `cullcast " +
                     command + " " + study.scenario_file.string() + "` first");
  }
  return file.string();
}

}  // namespace

report::BriefingData gather_briefing(const study::Study& study, std::vector<std::string>& warnings) {
  const fs::path dir = study.outputs.dir;
  const fs::path settlement = dir / "settlement.nc", metrics_csv = dir / "reef_metrics.csv";
  const fs::path ranking_csv = dir / "cull_ranking.csv", curve_csv = dir / "cull_curve.csv";
  need(settlement, "disperse", study);
  need(metrics_csv, "connect", study);
  if (study.cull.present) {
    need(ranking_csv, "prioritise", study);
    need(curve_csv, "prioritise", study);
  }
  report::BriefingData d;
  d.title = study.study.name.empty() ? study.scenario_file.stem().string() : study.study.name;
  d.description = study.study.description;
  d.version = CULLCAST_VERSION;
  d.generated_utc = utc_now();
  d.seed = study.study.seed;
  d.scenario_text = read_text(study.scenario_file);
  d.overrides = study.overrides;
  d.cull_present = study.cull.present;
  d.priority_threshold = study.cull.priority_threshold;

  const reefs::ReefSet reef_set = reefs::ReefSet::load(study.reefs);
  d.reefs = reef_set.reefs();
  const std::size_t n = d.reefs.size();

  // Connectivity per event, pooled per reef (network module).
  const network::Connectivity c = network::build_connectivity(drift::read_settlement_log(settlement), settlement);
  if (c.sinks() != n) {
    throw InputError(settlement.string() + ": its reef table (" + std::to_string(c.sinks()) +
                     " reefs) differs from the reef layer " + study.reefs.layer.string() + " (" + std::to_string(n) +
                     " reefs); run `cullcast disperse` again");
  }
  for (std::size_t i = 0; i < n; ++i) {
    if (c.sink_ids[i] != d.reefs[i].id) {
      throw InputError(settlement.string() + ": reef " + std::to_string(i) + " is \"" + c.sink_ids[i] +
                       "\" but the reef layer has \"" + d.reefs[i].id + "\"; run `cullcast disperse` again");
    }
  }
  d.event_labels = c.event_labels;
  const std::size_t events = c.events.size();
  if (events == 0) throw InputError(settlement.string() + ": no spawning events");
  std::vector<network::SparseMatrix> reef_p;
  for (std::size_t e = 0; e < events; ++e) reef_p.push_back(network::reef_probability(c, e));
  // Link statistics over events (a summary for drawing, as in connectivity.nc).
  std::map<std::pair<int, int>, std::vector<double>> per_link;
  for (std::size_t e = 0; e < events; ++e) {
    for (int r = 0; r < reef_p[e].outerSize(); ++r) {
      for (network::SparseMatrix::InnerIterator it(reef_p[e], r); it; ++it) {
        if (it.value() > 0) {
          auto& v = per_link[{r, static_cast<int>(it.col())}];
          v.resize(events, 0.0);
          v[e] = it.value();
        }
      }
    }
  }
  d.matrix.assign(n, std::vector<double>(n, 0.0));
  for (const auto& [key, v] : per_link) {
    report::Link l{key.first, key.second, 0, 0, v[0], v[0]};
    for (double x : v) {
      l.mean += x / static_cast<double>(events);
      l.min = std::min(l.min, x);
      l.max = std::max(l.max, x);
    }
    for (double x : v) l.sd += (x - l.mean) * (x - l.mean);
    l.sd = events > 1 ? std::sqrt(l.sd / static_cast<double>(events - 1)) : 0.0;
    d.matrix[l.from][l.to] = l.mean;
    d.links.push_back(l);
  }
  // Settlement per reef from every source, mean over events.
  d.results.assign(n, report::ReefResult{});
  for (std::size_t e = 0; e < events; ++e) {
    double released = 0;
    for (auto r : c.events[e].released) released += static_cast<double>(r);
    std::vector<double> settled(n, 0.0);
    const auto& m = c.events[e].settled;
    for (int r = 0; r < m.outerSize(); ++r) {
      for (network::SparseMatrix::InnerIterator it(m, r); it; ++it) settled[it.col()] += it.value();
    }
    for (std::size_t j = 0; j < n; ++j) {
      if (released > 0) d.results[j].settle_probability += settled[j] / released / static_cast<double>(events);
      if (d.reefs[j].area_ha > 0) d.results[j].settled_per_ha += settled[j] / d.reefs[j].area_ha / static_cast<double>(events);
    }
  }
  // Metrics from the connect stage.
  const Table metrics(metrics_csv);
  if (metrics.rows.size() != n + 1) {
    throw InputError(metrics_csv.string() + ": " + std::to_string(metrics.rows.size() - 1) + " reefs, the reef layer has " +
                     std::to_string(n) + "; run `cullcast connect` again");
  }
  for (std::size_t i = 0; i < n; ++i) {
    if (metrics.text(i + 1, "reef_id") != d.reefs[i].id) {
      throw InputError(metrics_csv.string() + " line " + std::to_string(i + 2) + ": reef \"" +
                       metrics.text(i + 1, "reef_id") + "\", expected \"" + d.reefs[i].id +
                       "\"; run `cullcast connect` again");
    }
    auto& r = d.results[i];
    r.role = metrics.text(i + 1, "role");
    r.larval_output = metrics.number(i + 1, "larval_output");
    r.local_retention = metrics.number(i + 1, "local_retention");
    r.self_recruitment = metrics.number(i + 1, "self_recruitment");
    r.settlement_success = metrics.number(i + 1, "settlement_success");
    r.export_strength = metrics.number(i + 1, "export_strength");
    r.import_strength = metrics.number(i + 1, "import_strength");
  }
  // Cull plan.
  if (study.cull.present) {
    const Table rank(ranking_csv);
    for (std::size_t k = 1; k < rank.rows.size(); ++k) {
      report::CullRow row;
      row.rank = static_cast<int>(rank.number(k, "rank"));
      row.reef_id = rank.text(k, "reef_id");
      row.reef = reef_set.index_of(row.reef_id);
      if (row.reef < 0) {
        throw InputError(ranking_csv.string() + " line " + std::to_string(k + 1) + ": reef \"" + row.reef_id +
                         "\" is not in the reef layer; run `cullcast prioritise` again");
      }
      row.effort_days = rank.number(k, "effort");
      row.averted_pct = rank.number(k, "recruits_averted_pct");
      row.cumulative_pct = rank.number(k, "cumulative_pct");
      row.member_mean = rank.number(k, "averted_member_mean");
      row.member_p10 = rank.number(k, "averted_member_p10");
      row.in_best_share = rank.number(k, "in_best_plan_share");
      row.one_night = rank.text(k, "depends_on_one_night") == "true";
      row.explanation = rank.text(k, "explanation");
      d.ranking.push_back(row);
    }
    const Table curve(curve_csv);
    for (std::size_t k = 1; k < curve.rows.size(); ++k) {
      d.curve.push_back({curve.number(k, "budget_vessel_days"), curve.number(k, "recruits_averted_pct"),
                         curve.number(k, "cost_vessel_days"), static_cast<int>(curve.number(k, "reefs"))});
    }
  }
  // Aggregations (reefs module).
  if (!study.reefs.aggregations.empty()) {
    const auto detections = reefs::load_detections(study.reefs.aggregations);
    for (const auto& a : reefs::cluster_detections(detections, reef_set, study.reefs.cluster_distance_m,
                                                   study.reefs.attach_tolerance_m)) {
      report::AggregationPoint p{a.id, 0, 0, a.adults, a.reef_index};
      for (const auto& q : a.points) {
        p.lon += q.lon / static_cast<double>(a.points.size());
        p.lat += q.lat / static_cast<double>(a.points.size());
      }
      d.aggregations.push_back(p);
    }
  }
  // Land mask: the currents' status at every grid node.
  try {
    const currents::CurrentField field = currents::CurrentField::open(study.currents);
    const auto& g = field.grid();
    if (g.nx >= 2 && g.ny >= 2) {
      d.land.nx = g.nx;
      d.land.ny = g.ny;
      d.land.lon0 = g.lon_min;
      d.land.lat0 = g.lat_min;
      d.land.dlon = (g.lon_max - g.lon_min) / static_cast<double>(g.nx - 1);
      d.land.dlat = (g.lat_max - g.lat_min) / static_cast<double>(g.ny - 1);
      d.land.land.resize(g.nx * g.ny);
      for (std::size_t j = 0; j < g.ny; ++j) {
        for (std::size_t i = 0; i < g.nx; ++i) {
          d.land.land[j * g.nx + i] = field.status(d.land.lon0 + d.land.dlon * static_cast<double>(i),
                                                   d.land.lat0 + d.land.dlat * static_cast<double>(j)) ==
                                      currents::SampleStatus::land;
        }
      }
      if (g.kind == currents::GridKind::curvilinear) {
        warnings.push_back("curvilinear currents grid: land drawn and density rasterised on a regular lon/lat grid of the same node count");
      }
    }
  } catch (const InputError& e) {
    warnings.push_back(std::string("no land mask on the map and no settlement raster: ") + e.what());
  }
  // Provenance.
  add_input(d, "scenario", study.scenario_file);
  for (const auto& f : study.currents.files) add_input(d, "currents", f);
  add_input(d, "reef layer", study.reefs.layer);
  add_input(d, "surveys", study.reefs.surveys);
  add_input(d, "aggregations", study.reefs.aggregations);
  add_input(d, "settlement records (disperse)", settlement);
  add_input(d, "reef metrics (connect)", metrics_csv);
  if (study.cull.present) {
    add_input(d, "cull ranking (prioritise)", ranking_csv);
    add_input(d, "cull curve (prioritise)", curve_csv);
  }
  auto setting = [&](const std::string& k, double v) {
    std::ostringstream s;
    s << k << " = " << v;
    d.settings.push_back(s.str());
  };
  setting("larvae.precompetent_days", study.larvae.precompetent_days);
  setting("larvae.competent_days", study.larvae.competent_days);
  setting("larvae.mortality_per_day", study.larvae.mortality_per_day);
  setting("motion.dt_minutes", study.motion.dt_minutes);
  setting("motion.kh_m2_s", study.motion.kh_m2_s);
  d.settings.push_back("motion.scheme = " + study.motion.scheme);
  setting("connectivity.min_probability", study.connectivity.min_probability);
  if (study.cull.present) {
    setting("cull.vessel_days", study.cull.vessel_days);
    setting("cull.efficiency_ha_per_day", study.cull.efficiency_ha_per_day);
    setting("cull.horizon_seasons", study.cull.horizon_seasons);
  }
  return d;
}

BriefSummary run_brief_stage(const CliContext& ctx, const study::Study& study,
                             const fs::path& previous) {
  BriefSummary summary;
  report::BriefingData d = gather_briefing(study, summary.warnings);
  d.warnings = summary.warnings;
  const fs::path dir = study.outputs.dir;
  fs::create_directories(dir);
  if (!previous.empty()) {
    const compare::RunOutputs last = compare::read_run_outputs(previous);
    const compare::RunComparison c = compare::compare_runs(last, compare::read_run_outputs(dir));
    report::ComparisonLabels labels;
    labels.heading = "What changed since the last plan";
    labels.name_a = "last plan";
    labels.name_b = "this plan";
    d.opening_html = report::render_comparison_section(c, labels);
    for (const auto& p : compare::write_comparison_csv(dir, "changes_since_previous", c)) {
      summary.outputs.push_back(p);
    }
    if (!ctx.quiet) ctx.out << "Since the last plan (" << previous.string() << "):\n" << compare::comparison_summary(c);
  }
  report::write_briefing_gpkg(dir / "briefing.gpkg", d);
  summary.outputs.push_back(dir / "briefing.gpkg");
  if (!d.land.empty()) {
    report::write_density_geotiff(dir / "settlement_density.tif", d);
    summary.outputs.push_back(dir / "settlement_density.tif");
  }
  report::write_briefing_html(dir / "briefing.html", d);
  summary.outputs.insert(summary.outputs.begin(), dir / "briefing.html");
  for (const char* nc : {"connectivity.nc", "tracks.nc"}) {
    if (fs::exists(dir / nc)) summary.reused.push_back(dir / nc);
  }
  for (const auto& w : summary.warnings) ctx.err << "cullcast: warning: " << w << "\n";
  if (!ctx.quiet) {
    ctx.out << "Briefing: " << d.reefs.size() << " reefs, " << d.links.size() << " links, "
            << d.event_labels.size() << " event(s)" << (d.cull_present ? ", " + std::to_string(d.ranking.size()) + " cull site(s)" : "")
            << "\n  outputs:";
    for (const auto& p : summary.outputs) ctx.out << " " << p.filename().string();
    ctx.out << " in " << dir.string() << "\n";
    if (!summary.reused.empty()) {
      ctx.out << "  NetCDF for reuse (from earlier stages):";
      for (const auto& p : summary.reused) ctx.out << " " << p.filename().string();
      ctx.out << "\n";
    }
    ctx.out << "  Outputs are decision support with stated uncertainty; field work follows local dive-safety "
               "codes, permits and licensed practice.\n";
  }
  return summary;
}

}  // namespace cullcast::cli
