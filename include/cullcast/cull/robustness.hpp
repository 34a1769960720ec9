#pragma once
// CONTRACT. The recommended plan as a ranked list, and how it holds up across
// the connectivity ensemble (one member per spawning event).
//
// Rank order: starting from no cull, the plan's reefs (each with its planned
// effort) are added one at a time, each time the one with the largest extra
// averted per vessel-day of effort; `averted` is that extra, so the column
// sums to the plan's total and `cumulative_pct` ends at the plan's share.
// Per member e: the plan's averted under P^e; expected = mean over members,
// worst decile = the 10 % quantile (Hyndman & Fan 1996 definition 7, as in
// network/link_ensemble.hpp). Each reef's contribution under e is
// averted_e(plan) - averted_e(plan without it). A reef "depends on one night"
// when there are >= 2 members, one member gives more than half of its summed
// contribution, and it is in the best plan of at most one member.
#include <string>
#include <vector>

#include "cullcast/cull/optimiser.hpp"

namespace cullcast::cull {

struct RankedReef {
  int rank = 0;                    // 1 = first
  int site = -1;
  std::string reef_id, name;
  int level = 0;
  double effort_days = 0;          // vessel-days
  double removed_fraction = 0;     // of its adults
  double adults = 0;               // before culling
  double averted = 0;              // extra weighted larvae averted when added in rank order
  double averted_pct = 0;          // of the weighted settlement without a cull, %
  double cumulative_pct = 0;       // %
  double gain_per_day = 0;         // averted / effort_days
  double member_mean = 0;          // contribution, mean over members
  double member_p10 = 0;           // contribution, 10 % quantile over members
  double in_best_share = 0;        // share of members whose own best plan includes this reef
  double top_member_share = 0;     // largest share of its summed contribution from one member
  std::string top_member;          // that member's label
  bool one_night = false;
};

struct Robustness {
  std::vector<RankedReef> ranking;
  double baseline = 0;                   // weighted settlement without a cull (mean matrix)
  double averted = 0;                    // by the plan, mean matrix
  std::vector<double> member_averted;    // by the plan, per member
  std::vector<double> member_baseline;   // per member
  double expected_averted = 0;           // mean over members
  double worst_decile_averted = 0;       // 10 % quantile over members
  std::vector<double> in_best_share;     // per site
};

Robustness assess_plan(const CullModel& m, const PlanResult& plan, double budget_days);

}  // namespace cullcast::cull
