#include "prioritise_stage.hpp"

#include <cmath>
#include <cstdio>
#include <map>
#include <ostream>

#include "cullcast/base/error.hpp"
#include "cullcast/cull/conservation.hpp"
#include "cullcast/cull/cull_outputs.hpp"
#include "cullcast/cull/larval_output.hpp"
#include "cullcast/network/link_ensemble.hpp"
#include "cullcast/reefs/release_plan.hpp"
#include "cullcast/reefs/surveys.hpp"
#include "number_text.hpp"

namespace cullcast::cli {
namespace fs = std::filesystem;
namespace {

constexpr const char* kCaution =
    "decision support with stated uncertainty; field work follows local dive-safety codes, permits "
    "and licensed practice";

}  // namespace

PrioritiseSummary run_prioritise_stage(const CliContext& ctx, const study::Study& study) {
  const auto& settings = study.cull;
  const fs::path settlement = study.outputs.dir / "settlement.nc";
  if (!fs::exists(settlement)) {
    throw InputError("settlement records not found: " + settlement.string() + "; run `cullcast disperse " +
                     study.scenario_file.string() + "` first");
  }
  PrioritiseSummary summary;
  const drift::SettlementData data = drift::read_settlement_log(settlement);
  const cull::ConservationReport books = cull::check_conservation(data);
  if (!books.ok()) {
    std::string msg = settlement.string() + ": larvae do not add up (released = settled + died + stranded + "
                      "lost + unsettled): " + books.problems.front();
    if (books.problems.size() > 1) msg += " (and " + std::to_string(books.problems.size() - 1) + " more)";
    throw InputError(msg + "; run `cullcast disperse` again");
  }
  const network::Connectivity c = network::build_connectivity(data, settlement);
  if (c.events.empty()) throw InputError(settlement.string() + ": no spawning events");
  const reefs::ReefSet reef_set = reefs::ReefSet::load(study.reefs);
  bool same = reef_set.size() == c.sinks();
  for (std::size_t i = 0; same && i < c.sinks(); ++i) same = reef_set.reefs()[i].id == c.sink_ids[i];
  if (!same) {
    throw InputError(settlement.string() + ": its reef table (" + std::to_string(c.sinks()) +
                     " reefs) differs from the reef layer " + study.reefs.layer.string() + " (" +
                     std::to_string(reef_set.size()) + " reefs); run `cullcast disperse` again");
  }

  // Adults per source (surveys or aggregation counts) and mean eggs per female.
  const auto sources = reefs::release_sources(reef_set, study);
  std::map<std::string, const reefs::ReleaseSource*> by_id;
  for (const auto& s : sources) by_id[s.id] = &s;
  std::vector<std::vector<cull::SizeCount>> sizes(reef_set.size());
  if (!study.reefs.surveys.empty()) {
    const auto table = reefs::load_surveys(study.reefs.surveys, reef_set);
    for (const auto& row : table.rows) {
      for (std::size_t k = 0; k < table.classes.size() && k < row.counts.size(); ++k) {
        if (row.counts[k]) sizes[row.reef_index].push_back({table.classes[k].min_cm, table.classes[k].max_cm, *row.counts[k]});
      }
    }
  }
  std::vector<double> adults(c.sources(), 0.0), eggs(c.sources(), 0.0);
  for (std::size_t s = 0; s < c.sources(); ++s) {
    const auto it = by_id.find(c.source_ids[s]);
    if (it == by_id.end()) {
      throw InputError(settlement.string() + ": release source \"" + c.source_ids[s] +
                       "\" is not among the scenario's reefs and aggregations; run `cullcast disperse` again");
    }
    adults[s] = it->second->adults;
    const int reef = c.source_kinds[s] == 0 ? c.source_reefs[s] : -1;
    eggs[s] = cull::mean_eggs_per_female(reef >= 0 ? sizes[reef] : std::vector<cull::SizeCount>{}, settings);
  }
  if (std::none_of(adults.begin(), adults.end(), [](double a) { return a > 0; })) {
    throw InputError("no adults to cull: no reef has a surveyed density above 0 and no aggregation has "
                     "counts (set [reefs] surveys or aggregations)");
  }

  const cull::CullModel model = cull::build_model(c, reef_set, adults, eggs, settings);
  const cull::PlanResult best = cull::optimise(model, settings.vessel_days);
  const auto curve = cull::budget_curve(model, settings.vessel_days, 40);
  const cull::Robustness rob = cull::assess_plan(model, best, settings.vessel_days);
  std::vector<network::SparseMatrix> reef_p;
  for (std::size_t e = 0; e < c.events.size(); ++e) reef_p.push_back(network::reef_probability(c, e));
  const auto explanations = cull::explain(model, rob, network::mean_matrix(reef_p));

  fs::create_directories(study.outputs.dir);
  const fs::path ranking = study.outputs.dir / "cull_ranking.csv", curve_file = study.outputs.dir / "cull_curve.csv";
  cull::write_cull_ranking_csv(ranking, rob, explanations);
  cull::write_cull_curve_csv(curve_file, curve);
  summary.outputs = {ranking, curve_file};
  summary.method = best.method;
  summary.reefs = static_cast<int>(rob.ranking.size());
  summary.averted_pct = rob.baseline > 0 ? 100.0 * rob.averted / rob.baseline : 0.0;
  if (best.method == "greedy" && !best.guarantee_applies) {
    summary.warnings.push_back("the greedy plan carries no approximation guarantee here (travel or a "
                               "multi-season horizon); raise exact_max_reefs / exact_max_plans for an exact plan");
  }
  for (const auto& w : summary.warnings) ctx.err << "cullcast: warning: " << w << "\n";
  if (!ctx.quiet) {
    auto& o = ctx.out;
    int priority = 0;
    for (double w : model.weights) priority += w > 0;
    o << "Cull plan: budget " << fixed_text(settings.vessel_days, 1) << " vessel-days (effort "
      << fixed_text(best.effort_days, 1) << ", travel " << fixed_text(best.travel_days, 2) << "), "
      << priority << " priority reef(s), " << model.member_count() << " spawning event(s), horizon "
      << settings.horizon_seasons << " season(s), method " << best.method;
    if (best.method == "greedy") {
      o << (best.guarantee_applies
                ? " (within " + fixed_text(100 * best.guarantee, 1) + " % of the optimum at worst)"
                : " (no guarantee)");
    }
    o << "\n  averts " << fixed_text(summary.averted_pct, 1)
      << " % of the weighted settlement on priority reefs (mean connectivity); across events: "
         "expected "
      << fixed_text(rob.baseline > 0 ? 100 * rob.expected_averted / rob.baseline : 0, 1)
      << " %, worst decile "
      << fixed_text(rob.baseline > 0 ? 100 * rob.worst_decile_averted / rob.baseline : 0, 1)
      << " %\n";
    if (rob.ranking.empty()) o << "  no reef is worth culling within this budget\n";
    for (std::size_t k = 0; k < rob.ranking.size(); ++k) {
      const auto& r = rob.ranking[k];
      o << "  " << r.rank << ". " << explanations[k].text << " In the best plan of "
        << fixed_text(100 * r.in_best_share, 0) << " % of spawning events"
        << (r.one_night ? "; RANK DEPENDS ON ONE NIGHT" : "") << ".\n";
    }
    o << "  outputs: cull_ranking.csv cull_curve.csv in " << study.outputs.dir.string() << "\n";
    o << "  " << kCaution << "\n";
  }
  return summary;
}

}  // namespace cullcast::cli
