// Plain-words explanations of a cull plan; contract in explanation.hpp.
#include "cullcast/cull/explanation.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>

#include "cullcast/cull/larval_output.hpp"
#include "cullcast/network/network_graph.hpp"

namespace cullcast::cull {
namespace {

std::string num(double v, const char* fmt) {
  char b[64];
  std::snprintf(b, sizeof b, fmt, v);
  return b;
}

std::string prob(double p) { return num(p, p >= 0.01 ? "%.3f" : "%.1e"); }

}  // namespace

std::vector<Explanation> explain(const CullModel& m, const Robustness& r, const SparseMatrix& reef_p) {
  const std::vector<double> larvae = source_larvae(m, Plan{});
  std::vector<Explanation> out;
  for (const auto& row : r.ranking) {
    Explanation ex;
    ex.reef_id = row.reef_id;
    const auto& site = m.sites[row.site];
    std::map<int, double> flow, p_direct;  // priority reef -> weighted larvae; larvae-weighted P
    double larvae_here = 0;
    for (int s : site.sources) {
      larvae_here += larvae[s];
      for (SparseMatrix::InnerIterator it(m.mean, s); it; ++it) {
        const int j = static_cast<int>(it.col());
        if (m.weights[j] <= 0 || j == site.reef) continue;
        flow[j] += larvae[s] * it.value() * m.weights[j];
        p_direct[j] += larvae[s] * it.value();
      }
    }
    double total = 0;
    for (const auto& [j, f] : flow) total += f;
    std::vector<std::pair<double, int>> order;
    for (const auto& [j, f] : flow) order.push_back({f, j});
    std::sort(order.rbegin(), order.rend());
    for (std::size_t k = 0; k < order.size() && k < 3; ++k) {
      const int j = order[k].second;
      ex.direct.push_back({m.reef_ids[j], total > 0 ? order[k].first / total : 0.0,
                           larvae_here > 0 ? p_direct[j] / larvae_here : 0.0, {row.reef_id, m.reef_ids[j]}});
    }
    // Priority reefs without a direct link: most probable stepping-stone path.
    std::vector<std::pair<double, PriorityLink>> paths;
    for (std::size_t j = 0; j < m.weights.size(); ++j) {
      if (m.weights[j] <= 0 || static_cast<int>(j) == site.reef || flow.count(static_cast<int>(j))) continue;
      const auto path = network::most_probable_path(reef_p, site.reef, static_cast<int>(j));
      if (path.reefs.size() < 3) continue;
      PriorityLink link{m.reef_ids[j], 0.0, path.probability, {}};
      for (int k : path.reefs) link.path.push_back(m.reef_ids[k]);
      paths.push_back({path.probability * m.weights[j], link});
    }
    std::sort(paths.begin(), paths.end(), [](const auto& a, const auto& b) { return a.first > b.first; });
    for (std::size_t k = 0; k < paths.size() && k < 3; ++k) ex.stepping.push_back(paths[k].second);

    std::string t = row.reef_id + (row.name != row.reef_id ? " (" + row.name + ")" : "") + ": " +
                    num(row.effort_days, "%.1f") + " vessel-days remove about " +
                    num(100 * row.removed_fraction, "%.0f") + " % of its ~" + num(row.adults, "%.0f") +
                    " adults and avert " + num(row.averted_pct, "%.1f") +
                    " % of the weighted settlement expected on the priority reefs.";
    if (m.weights[site.reef] > 0) {
      double self = 0;
      for (int s : site.sources) self += larvae[s] * m.mean.coeff(s, site.reef);
      const double share = larvae_here > 0 ? self / larvae_here : 0.0;
      t += share > 0 ? " It is itself a priority reef: a fraction " + prob(share) + " of its larvae resettle on it."
                     : " It is itself a priority reef, though none of its larvae were seen resettling on it.";
    }
    if (!ex.direct.empty()) {
      t += " Its larvae settle directly on priority reef";
      t += ex.direct.size() > 1 ? "s " : " ";
      for (std::size_t k = 0; k < ex.direct.size(); ++k) {
        t += (k ? ", " : "") + ex.direct[k].priority_reef + " (" + num(100 * ex.direct[k].share, "%.0f") +
             " % of its flow to priority reefs, P = " + prob(ex.direct[k].probability) + " per larva)";
      }
      t += ".";
    }
    if (!ex.stepping.empty()) {
      t += " It also reaches ";
      for (std::size_t k = 0; k < ex.stepping.size(); ++k) {
        const auto& s = ex.stepping[k];
        t += (k ? "; " : "") + s.priority_reef + " through stepping stone" + (s.path.size() > 3 ? "s " : " ");
        for (std::size_t q = 1; q + 1 < s.path.size(); ++q) t += (q > 1 ? " -> " : "") + s.path[q];
        t += " (path probability " + prob(s.probability) + " per larva per generation)";
      }
      t += m.settings.horizon_seasons > m.settings.maturation_seasons
               ? ", which the projection counts."
               : "; these routes take more than one generation and lie beyond the horizon.";
    }
    if (row.one_night) {
      t += " Caution: most of its benefit comes from one spawning night (" + row.top_member + ").";
    }
    ex.text = t;
    out.push_back(std::move(ex));
  }
  return out;
}

}  // namespace cullcast::cull
