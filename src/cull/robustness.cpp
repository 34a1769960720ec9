// Ranking and ensemble robustness of a cull plan; contract in robustness.hpp.
// Quantiles: Hyndman & Fan (1996), Am. Stat. 50:361-365, definition 7.
#include "cullcast/cull/robustness.hpp"

#include <algorithm>
#include <numeric>

#include "cullcast/network/link_ensemble.hpp"

namespace cullcast::cull {

Robustness assess_plan(const CullModel& m, const PlanResult& best, double budget_days) {
  Robustness r;
  const int members = static_cast<int>(m.member_count());
  r.baseline = baseline(m, -1);
  r.averted = averted(m, best.plan, -1);
  for (int e = 0; e < members; ++e) {
    r.member_baseline.push_back(baseline(m, e));
    r.member_averted.push_back(r.member_baseline.back() - weighted_recruitment(m, best.plan, e));
  }
  if (members > 0) {
    r.expected_averted = std::accumulate(r.member_averted.begin(), r.member_averted.end(), 0.0) / members;
    std::vector<double> sorted = r.member_averted;
    std::sort(sorted.begin(), sorted.end());
    r.worst_decile_averted = network::quantile_sorted(sorted, 0.1);
  }
  r.in_best_share.assign(m.sites.size(), 0.0);
  for (int e = 0; e < members; ++e) {
    const PlanResult own = optimise(m, budget_days, e);
    for (int s : sites_in(own.plan)) r.in_best_share[s] += 1.0 / members;
  }

  // Rank order by extra averted per vessel-day.
  std::vector<int> left = sites_in(best.plan);
  Plan partial(m.sites.size(), 0);
  double current = r.baseline;
  double cumulative = 0;
  while (!left.empty()) {
    std::size_t pick = 0;
    double pick_gain = -1, pick_ratio = -1;
    for (std::size_t k = 0; k < left.size(); ++k) {
      Plan trial = partial;
      trial[left[k]] = best.plan[left[k]];
      const double gain = current - weighted_recruitment(m, trial, -1);
      const double ratio = gain / (best.plan[left[k]] * m.settings.effort_step_days);
      if (ratio > pick_ratio) pick = k, pick_gain = gain, pick_ratio = ratio;
    }
    const int s = left[pick];
    left.erase(left.begin() + static_cast<std::ptrdiff_t>(pick));
    partial[s] = best.plan[s];
    current -= pick_gain;
    cumulative += pick_gain;
    RankedReef row;
    row.rank = static_cast<int>(r.ranking.size()) + 1;
    row.site = s;
    row.reef_id = m.sites[s].id;
    row.name = m.sites[s].name;
    row.level = best.plan[s];
    row.effort_days = row.level * m.settings.effort_step_days;
    row.removed_fraction = removed_fraction(m, s, row.level);
    for (int src : m.sites[s].sources) row.adults += m.sources[src].adults;
    row.averted = pick_gain;
    row.averted_pct = r.baseline > 0 ? 100.0 * pick_gain / r.baseline : 0.0;
    row.cumulative_pct = r.baseline > 0 ? 100.0 * cumulative / r.baseline : 0.0;
    row.gain_per_day = pick_ratio;
    row.in_best_share = r.in_best_share[s];
    // Contribution per member: leave-one-out.
    Plan without = best.plan;
    without[s] = 0;
    std::vector<double> contrib;
    for (int e = 0; e < members; ++e) {
      contrib.push_back(weighted_recruitment(m, without, e) - weighted_recruitment(m, best.plan, e));
    }
    if (members > 0) {
      row.member_mean = std::accumulate(contrib.begin(), contrib.end(), 0.0) / members;
      std::vector<double> sorted = contrib;
      std::sort(sorted.begin(), sorted.end());
      row.member_p10 = network::quantile_sorted(sorted, 0.1);
      const double sum = std::accumulate(contrib.begin(), contrib.end(), 0.0);
      const auto top = std::max_element(contrib.begin(), contrib.end());
      row.top_member_share = sum > 0 ? *top / sum : 0.0;
      row.top_member = m.member_labels.at(static_cast<std::size_t>(top - contrib.begin()));
      row.one_night = members >= 2 && row.top_member_share > 0.5 && row.in_best_share * members <= 1.0 + 1e-9;
    }
    r.ranking.push_back(row);
  }
  return r;
}

}  // namespace cullcast::cull
