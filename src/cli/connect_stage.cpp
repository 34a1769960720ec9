#include "connect_stage.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numeric>
#include <optional>
#include <ostream>
#include <sstream>

#include "cullcast/base/error.hpp"
#include "cullcast/network/binomial_interval.hpp"
#include "cullcast/network/connectivity_writer.hpp"
#include "cullcast/network/origin_comparison.hpp"
#include "cullcast/network/persistence.hpp"
#include "cullcast/network/stepping_stones.hpp"
#include "cullcast/reefs/reef_set.hpp"
#include "cullcast/reefs/release_plan.hpp"
#include "cullcast/report/reef_layer_writer.hpp"
#include "number_text.hpp"

namespace cullcast::cli {
namespace fs = std::filesystem;
namespace {

std::string general(double v) {
  char b[48];
  std::snprintf(b, sizeof b, "%.3g", v);
  return b;
}

// L_i per source. The network module computes no biology: for now the
// surveyed adults of each source stand in for its relative larval output
// (the cull stage will supply eggs later). Equal outputs when the scenario
// asks for them or no source has adults.
std::vector<double> larval_output(const study::Study& study, const reefs::ReefSet& reef_set,
                                  const network::Connectivity& c, const fs::path& settlement,
                                  std::vector<std::string>& warnings) {
  std::vector<double> equal(c.sources(), 1.0);
  if (study.connectivity.larval_output == "equal") return equal;
  const auto sources = reefs::release_sources(reef_set, study);
  std::vector<double> out(c.sources(), 0.0);
  for (std::size_t s = 0; s < c.sources(); ++s) {
    const auto it = std::find_if(sources.begin(), sources.end(),
                                 [&](const reefs::ReleaseSource& r) { return r.id == c.source_ids[s]; });
    if (it == sources.end()) {
      throw InputError(settlement.string() + ": release source \"" + c.source_ids[s] +
                       "\" is not among the scenario's reefs and aggregations; the settlement "
                       "records come from another set-up: run `cullcast disperse` again");
    }
    out[s] = it->adults;
  }
  if (std::all_of(out.begin(), out.end(), [](double v) { return !(v > 0); })) {
    warnings.push_back("no source has surveyed adults: equal larval output assumed for every "
                       "source ([connectivity] larval_output = \"equal\" silences this)");
    return equal;
  }
  return out;
}

network::Attributes provenance(const study::Study& study, const fs::path& settlement) {
  const auto& s = study.connectivity;
  std::ostringstream quantiles;
  for (std::size_t i = 0; i < s.quantiles.size(); ++i) quantiles << (i ? " " : "") << s.quantiles[i];
  std::ostringstream overrides;
  for (const auto& o : study.overrides) overrides << o << ";";
  return {{"source", std::string("cullcast ") + CULLCAST_VERSION},
          {"history", "cullcast connect " + study.scenario_file.string()},
          {"study_name", study.study.name},
          {"scenario_file", study.scenario_file.string()},
          {"settlement_file", settlement.string()},
          {"min_probability", network::csv_number(s.min_probability)},
          {"confidence", network::csv_number(s.confidence)},
          {"quantiles", quantiles.str()},
          {"larval_output", s.larval_output},
          {"lifetime_reproduction", network::csv_number(s.lifetime_reproduction)},
          {"overrides", overrides.str()}};
}

void print_summary(std::ostream& out, const network::Connectivity& c,
                   const std::vector<network::ReefMetrics>& m, const ConnectSummary& s,
                   std::int64_t min_released, const study::ConnectivitySettings& settings) {
  const std::size_t n = m.size();
  std::vector<std::size_t> order(n);
  std::iota(order.begin(), order.end(), 0);
  out << "Connectivity: " << c.sources() << " sources x " << c.sinks() << " reefs, "
      << c.events.size() << " event(s)\n";
  auto top = [&](const char* title, auto key) {
    std::vector<std::size_t> o = order;
    std::stable_sort(o.begin(), o.end(), [&](auto a, auto b) { return key(m[a]) > key(m[b]); });
    out << "  " << title << ":";
    int shown = 0;
    for (std::size_t i : o) {
      if (shown == 3 || !(key(m[i]) > 0)) break;
      out << (shown ? ", " : " ") << c.sink_ids[i] << " (" << general(key(m[i])) << ")";
      ++shown;
    }
    out << (shown == 0 ? " none\n" : "\n");
  };
  top("top sources (export)", [](const network::ReefMetrics& r) { return r.export_strength; });
  top("top sinks (import)", [](const network::ReefMetrics& r) { return r.import_strength; });
  double lo = INFINITY, hi = -INFINITY;
  for (const auto& r : m) {
    if (std::isnan(r.self_recruitment)) continue;
    lo = std::min(lo, r.self_recruitment);
    hi = std::max(hi, r.self_recruitment);
  }
  out << "  self-recruitment: "
      << (lo <= hi ? fixed_text(lo, 3, "n/a") + " .. " + fixed_text(hi, 3, "n/a") : "no settlers")
      << "\n";
  out << "  persistence eigenvalue: " << fixed_text(s.persistence_eigenvalue, 4, "n/a")
      << " (lifetime reproduction " << general(settings.lifetime_reproduction) << "; "
      << (s.persistence_eigenvalue > 1 ? "the network can sustain itself"
                                       : "below 1: not self-sustaining");
  if (s.larval_eigenvalue > 0) {
    out << "; persistence needs lifetime reproduction > " << general(1.0 / s.larval_eigenvalue);
  }
  out << ")\n";
  if (min_released > 0) {
    out << "  resolution: " << min_released << " particles per source and event resolve P >= "
        << general(network::resolution_limit(min_released)) << "; an unseen link has P < "
        << general(network::rule_of_three(min_released)) << " (95 %, rule of three)\n";
  }
  out << "  outputs:";
  for (const auto& p : s.outputs) out << " " << p.filename().string();
  out << " in " << (s.outputs.empty() ? std::string() : s.outputs.front().parent_path().string()) << "\n";
}

}  // namespace

ConnectSummary run_connect_stage(const CliContext& ctx, const study::Study& study) {
  const auto& settings = study.connectivity;
  const fs::path settlement = study.outputs.dir / "settlement.nc";
  if (!fs::exists(settlement)) {
    throw InputError("settlement records not found: " + settlement.string() +
                     "; run `cullcast disperse " + study.scenario_file.string() + "` first");
  }
  ConnectSummary summary;
  const network::Connectivity c =
      network::build_connectivity(drift::read_settlement_log(settlement), settlement);
  const reefs::ReefSet reef_set = reefs::ReefSet::load(study.reefs);
  bool same_reefs = reef_set.size() == c.sinks();
  for (std::size_t i = 0; same_reefs && i < c.sinks(); ++i) same_reefs = reef_set.reefs()[i].id == c.sink_ids[i];
  if (!same_reefs) {
    throw InputError(settlement.string() + ": its reef table (" + std::to_string(c.sinks()) +
                     " reefs) differs from the reef layer " + study.reefs.layer.string() + " (" +
                     std::to_string(reef_set.size()) + " reefs); run `cullcast disperse` again");
  }
  if (c.events.empty()) throw InputError(settlement.string() + ": no spawning events");

  const std::vector<double> output = larval_output(study, reef_set, c, settlement, summary.warnings);
  const std::vector<double> reef_l = network::reef_output(c, output);

  // Particle-count warning: links at min_probability need n particles for the
  // target relative standard error.
  std::int64_t min_released = -1;
  for (const auto& m : c.events) {
    for (auto r : m.released) {
      if (r > 0) min_released = min_released < 0 ? r : std::min(min_released, r);
    }
  }
  if (settings.min_probability > 0 && min_released > 0) {
    const std::int64_t needed =
        network::particles_for_relative_error(settings.min_probability, settings.target_relative_error);
    if (min_released < needed) {
      summary.warnings.push_back(
          "too few particles: " + std::to_string(min_released) +
          " per source and event, but a link of probability " + general(settings.min_probability) +
          " needs " + std::to_string(needed) + " for a relative standard error of " +
          general(settings.target_relative_error) + " (raise larvae_per_reef)");
    }
  }

  const network::Ensemble ensemble = network::link_ensemble(c, settings.quantiles, settings.confidence);
  std::vector<network::SparseMatrix> reef_p;
  for (std::size_t e = 0; e < c.events.size(); ++e) reef_p.push_back(network::reef_probability(c, e));
  const network::SparseMatrix mean_p = network::mean_matrix(reef_p);
  const auto metrics = network::reef_metrics(mean_p, reef_l, {settings.min_probability, settings.generations});
  const auto larval = network::dominant_eigenvalue(mean_p);
  const auto scaled = network::dominant_eigenvalue(network::reproduction_scaled(
      mean_p, std::vector<double>(c.sinks(), settings.lifetime_reproduction)));
  if (!larval.converged || !scaled.converged) {
    summary.warnings.push_back("the persistence eigenvalue did not converge; treat it as approximate");
  }
  summary.larval_eigenvalue = larval.value;
  summary.persistence_eigenvalue = scaled.value;
  std::vector<network::Attribution> attributions;
  for (const auto& id : settings.attribute) attributions.push_back(network::attribute_sink(c, id, output));

  fs::create_directories(study.outputs.dir);
  const fs::path dir = study.outputs.dir;
  const auto attrs = provenance(study, settlement);
  network::write_connectivity_csv(dir / "connectivity.csv", c, ensemble, settings.confidence);
  network::write_connectivity_netcdf(dir / "connectivity.nc", c, ensemble, attrs);
  network::write_reef_metrics_csv(dir / "reef_metrics.csv", c.sink_ids, reef_l, metrics, settings.generations);
  summary.outputs = {dir / "connectivity.csv", dir / "connectivity.nc", dir / "reef_metrics.csv"};
  if (!attributions.empty()) {
    network::write_attribution_csv(dir / "attribution.csv", c, attributions);
    summary.outputs.push_back(dir / "attribution.csv");
  }
  // The backward drift's origins of the [backward] sink beside the matrix
  // attribution of the same reef (origin_comparison.hpp).
  std::optional<network::OriginComparison> origins_compared;
  const fs::path backward_csv = dir / "backward_origins.csv";
  if (!study.backward.sink.empty() && fs::exists(backward_csv)) {
    const network::Attribution matrix = network::attribute_sink(c, study.backward.sink, output);
    origins_compared = network::compare_origins(c, matrix, network::read_backward_origins(backward_csv));
    network::write_origin_comparison_csv(dir / "origins_compared.csv", *origins_compared);
    summary.outputs.push_back(dir / "origins_compared.csv");
  }
  // Stepping-stone routes into the high-priority reefs (priority >= 0.5; every
  // reef when there are none and the network is small enough for all pairs).
  std::vector<int> route_sinks;
  for (std::size_t j = 0; j < reef_set.size(); ++j) {
    if (reef_set.reefs()[j].priority >= 0.5) route_sinks.push_back(static_cast<int>(j));
  }
  if (route_sinks.empty() && reef_set.size() <= 200) {
    for (std::size_t j = 0; j < reef_set.size(); ++j) route_sinks.push_back(static_cast<int>(j));
  }
  network::write_stepping_stones_csv(dir / "stepping_stones.csv", c.sink_ids,
                                     network::stepping_stone_routes(mean_p, route_sinks));
  summary.outputs.push_back(dir / "stepping_stones.csv");
  using F = report::LayerField;
  auto real = [&](const char* name, auto get) {
    F f{name, F::Type::real, {}, {}, {}};
    for (const auto& m : metrics) f.reals.push_back(get(m));
    return f;
  };
  auto integer = [&](std::string name, auto get) {
    F f{std::move(name), F::Type::integer, {}, {}, {}};
    for (const auto& m : metrics) f.integers.push_back(get(m));
    return f;
  };
  F role{"role", F::Type::text, {}, {}, {}};
  for (const auto& m : metrics) role.texts.push_back(m.role);
  F out_f{"larval_output", F::Type::real, reef_l, {}, {}};
  const std::vector<F> fields = {
      out_f,
      real("local_retention", [](const auto& m) { return m.local_retention; }),
      real("self_recruitment", [](const auto& m) { return m.self_recruitment; }),
      real("settlement_success", [](const auto& m) { return m.settlement_success; }),
      real("export_strength", [](const auto& m) { return m.export_strength; }),
      real("import_strength", [](const auto& m) { return m.import_strength; }),
      integer("out_degree", [](const auto& m) { return m.out_degree; }),
      integer("in_degree", [](const auto& m) { return m.in_degree; }),
      real("betweenness", [](const auto& m) { return m.betweenness; }),
      integer("component", [](const auto& m) { return m.component; }),
      integer("component_size", [](const auto& m) { return m.component_size; }),
      integer("reach_" + std::to_string(settings.generations), [](const auto& m) { return m.reach; }),
      role};
  report::write_reef_layer(dir / "reef_metrics.geojson", reef_set.reefs(), fields, "reef_metrics");
  report::write_reef_layer(dir / "reef_metrics.gpkg", reef_set.reefs(), fields, "reef_metrics");
  summary.outputs.push_back(dir / "reef_metrics.geojson");
  summary.outputs.push_back(dir / "reef_metrics.gpkg");

  for (const auto& w : summary.warnings) ctx.err << "cullcast: warning: " << w << "\n";
  if (!ctx.quiet) {
    print_summary(ctx.out, c, metrics, summary, min_released, settings);
    for (const auto& a : attributions) {
      ctx.out << "  origins of settlers on " << a.sink_id << ":";
      for (std::size_t k = 0; k < a.origins.size() && k < 3; ++k) {
        const auto& o = a.origins[k];
        ctx.out << (k ? ", " : " ") << c.source_ids[o.source] << " "
                << fixed_text(100 * o.share, 1, "n/a") << " % (events "
                << fixed_text(100 * o.event_min, 0, "n/a") << "-"
                << fixed_text(100 * o.event_max, 0, "n/a") << " %)";
      }
      ctx.out << (a.origins.empty() ? " no larvae settled there\n" : "\n");
    }
    if (origins_compared) {
      ctx.out << "  origins of " << origins_compared->sink_id
              << ", matrix attribution vs backward drift: total variation distance "
              << fixed_text(origins_compared->total_variation, 2, "n/a") << ", "
              << origins_compared->top5_shared
              << " of the top five shared (origins_compared.csv)\n";
    }
  }
  return summary;
}

}  // namespace cullcast::cli
