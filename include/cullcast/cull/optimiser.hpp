#pragma once
// CONTRACT. Choose effort levels per reef that maximise the weighted
// settlement averted on priority reefs (cull_model.hpp) with plan_cost <= budget.
//
// Which method runs ("auto"):
//  - horizon 1, no travel: EXACT by dynamic programming. The objective is then a
//    sum of per-reef terms, so the problem is a multiple-choice knapsack over
//    whole effort steps, solved exactly in O(reefs x steps x levels).
//  - horizon 1 with travel, at most exact_max_reefs candidate reefs: EXACT by
//    enumerating reef sets (tour length never shrinks when a reef is added, so
//    a set whose travel already exceeds the budget prunes all its supersets)
//    and the knapsack programme within each set.
//  - horizon > 1, at most exact_max_plans effort plans: EXACT by enumeration.
//  - otherwise: lazy GREEDY (Minoux 1978, "Accelerated greedy algorithms for
//    maximizing submodular set functions", LNCS 7:234-243), run twice: by gain
//    per vessel-day and by gain alone; the better plan is kept. For a monotone
//    submodular objective with additive costs the better of the two is within
//    (1 - 1/e)/2 ~ 0.316 of the optimum (Leskovec et al. 2007, "Cost-effective
//    outbreak detection in networks", KDD 2007:420-429). That guarantee holds
//    here when the horizon is 1, travel is not counted, and every reef's averted
//    curve is concave in effort (checked: PlanResult::guarantee_applies); with
//    travel or a longer horizon the greedy plan carries no guarantee.
// Candidates: reefs whose full-cap cull alone averts something (a reef with no
// path to a priority reef within the horizon averts nothing and is never chosen).
#include <string>
#include <vector>

#include "cullcast/cull/cull_model.hpp"

namespace cullcast::cull {

struct PlanResult {
  Plan plan;                       // effort level per site
  double averted = 0;              // weighted larvae averted
  double effort_days = 0, travel_days = 0, cost_days = 0;  // vessel-days
  std::string method;              // "exact-dp", "exact-sets", "exact-enumeration", "greedy"
  bool guarantee_applies = false;  // greedy: the (1 - 1/e)/2 bound holds (see above)
  double guarantee = 1.0;          // fraction of the optimum guaranteed (1 for exact)
};

// `method`: "auto", "exact" or "greedy" (empty = the settings' method). "exact"
// on an instance too large for it falls back to greedy (PlanResult::method says).
PlanResult optimise(const CullModel& m, double budget_days, int member = -1,
                    const std::string& method = "");

// Candidate sites under a member (full-cap solo cull averts > 0).
std::vector<int> candidate_sites(const CullModel& m, int member = -1);

struct CurvePoint {
  double budget_days = 0;          // vessel-days
  double averted = 0;              // weighted larvae averted by the best plan found
  double averted_pct = 0;          // of the weighted settlement without a cull, %
  double cost_days = 0;            // what that plan uses, vessel-days
  double marginal_per_day = 0;     // extra averted per extra vessel-day since the previous point
  int reefs = 0;                   // reefs in the plan
  std::string method;
};
// The optimiser at budgets 0, d, 2d, ... up to `budget_days` (d a whole number of
// effort steps, at most `points` + 1 points). A plan that fits a smaller budget
// fits a larger one, so each point keeps the better of its own plan and the
// previous point's: the curve never falls.
std::vector<CurvePoint> budget_curve(const CullModel& m, double budget_days, int points,
                                     std::vector<PlanResult>* plans = nullptr);

}  // namespace cullcast::cull
