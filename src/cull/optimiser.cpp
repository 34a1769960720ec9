// Cull plan optimisation: exact multiple-choice knapsack by dynamic programming
// (Dudzinski & Walukiewicz 1987, "Exact methods for the knapsack problem and its
// generalizations", Eur. J. Oper. Res. 28:3-21, from memory), exact set
// enumeration with travel, and lazy greedy (Minoux 1978) with the cost-benefit /
// unit-cost pair of Leskovec et al. (2007). Contract in optimiser.hpp.
#include "cullcast/cull/optimiser.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <queue>
#include <unordered_map>

#include "cullcast/cull/larval_output.hpp"

namespace cullcast::cull {
namespace {

constexpr double kTol = 1e-9;            // vessel-days: budget comparisons
constexpr double kDpCellLimit = 2e7;     // DP table cells before falling back to greedy
constexpr int kExactTourMax = 12;        // tour_km is exact up to this many reefs

// Per-site averted value by level, horizon 1 (the objective is separable).
std::vector<double> site_gains(const CullModel& m, int site, int member) {
  const auto& v = m.value_per_larva[static_cast<std::size_t>(member + 1)];
  const auto& st = m.sites[site];
  std::vector<double> out(static_cast<std::size_t>(st.max_level + 1), 0.0);
  for (int l = 1; l <= st.max_level; ++l) {
    const double keep = 1.0 - removed_fraction(m, site, l);
    for (int s : st.sources) {
      const auto& src = m.sources[s];
      const double dens0 = src.aggregation ? m.settings.aggregation_density_per_ha
                                           : src.adults / m.reef_area_ha[src.reef];
      const double a = src.adults * keep;
      const double dens = src.aggregation ? dens0 : dens0 * keep;
      const double l0 = larvae_released(src.adults, dens0, src.eggs_per_female, m.settings);
      const double l1 = larvae_released(a, dens, src.eggs_per_female, m.settings);
      out[l] += (l0 - l1) * v[s];
    }
  }
  return out;
}

struct Knapsack {
  double value = -std::numeric_limits<double>::infinity();
  std::vector<int> levels;  // per item
};

// Multiple-choice knapsack: item i takes a level in [min_level, cap_i], uses
// that many steps, gains gains[i][level]; at most K steps in all.
Knapsack knapsack(const std::vector<std::vector<double>>& gains, int K, int min_level) {
  Knapsack out;
  const std::size_t n = gains.size();
  if (K < 0) return out;
  const double ninf = -std::numeric_limits<double>::infinity();
  std::vector<double> prev(static_cast<std::size_t>(K + 1), 0.0), cur(prev.size());
  std::vector<std::vector<int>> choice(n, std::vector<int>(prev.size(), 0));
  for (std::size_t i = 0; i < n; ++i) {
    const int cap = static_cast<int>(gains[i].size()) - 1;
    for (int k = 0; k <= K; ++k) {
      double best = ninf;
      int arg = 0;
      for (int l = min_level; l <= std::min(cap, k); ++l) {
        if (prev[k - l] == ninf) continue;
        const double v = prev[k - l] + gains[i][l];
        // Ties keep the smaller effort.
        if (best == ninf || v > best + 1e-12 * std::fabs(best)) best = v, arg = l;
      }
      cur[k] = best;
      choice[i][k] = arg;
    }
    std::swap(prev, cur);
  }
  if (prev[K] == ninf) return out;
  out.value = prev[K];
  out.levels.assign(n, 0);
  int k = K;
  for (std::size_t i = n; i-- > 0;) {
    out.levels[i] = choice[i][k];
    k -= out.levels[i];
  }
  return out;
}

PlanResult finish(const CullModel& m, Plan plan, int member, std::string method) {
  PlanResult r;
  r.plan = std::move(plan);
  r.averted = averted(m, r.plan, member);
  r.effort_days = effort_days(m, r.plan);
  r.travel_days = travel_days(m, sites_in(r.plan));
  r.cost_days = r.effort_days + r.travel_days;
  r.method = std::move(method);
  return r;
}

PlanResult exact_dp(const CullModel& m, const std::vector<int>& cand, double budget, int member) {
  std::vector<std::vector<double>> gains;
  for (int s : cand) gains.push_back(site_gains(m, s, member));
  const Knapsack k = knapsack(gains, m.steps_in(budget), 0);
  Plan plan(m.sites.size(), 0);
  for (std::size_t i = 0; i < cand.size() && !k.levels.empty(); ++i) plan[cand[i]] = k.levels[i];
  return finish(m, plan, member, "exact-dp");
}

PlanResult exact_sets(const CullModel& m, const std::vector<int>& cand, double budget, int member) {
  std::vector<std::vector<double>> gains;
  for (int s : cand) gains.push_back(site_gains(m, s, member));
  Plan best_plan(m.sites.size(), 0);
  double best = 0;
  std::vector<int> chosen;  // indices into cand
  auto visit = [&](auto&& self, std::size_t next) -> void {
    for (std::size_t c = next; c < cand.size(); ++c) {
      chosen.push_back(static_cast<int>(c));
      std::vector<int> sites;
      for (int k : chosen) sites.push_back(cand[k]);
      const double travel = travel_days(m, sites);
      const double spare = budget - travel - static_cast<double>(sites.size()) * m.settings.effort_step_days;
      if (spare >= -kTol) {
        std::vector<std::vector<double>> g;
        for (int k : chosen) g.push_back(gains[k]);
        const Knapsack k = knapsack(g, m.steps_in(budget - travel), 1);
        if (!k.levels.empty() && k.value > best) {
          best = k.value;
          std::fill(best_plan.begin(), best_plan.end(), 0);
          for (std::size_t i = 0; i < chosen.size(); ++i) best_plan[cand[chosen[i]]] = k.levels[i];
        }
        self(self, c + 1);
      } else if (static_cast<int>(sites.size()) > kExactTourMax) {
        // A heuristic tour may exceed a superset's: keep looking below.
        self(self, c + 1);
      }  // exact tour over budget: every superset is too (tours never shrink)
      chosen.pop_back();
    }
  };
  visit(visit, 0);
  return finish(m, best_plan, member, "exact-sets");
}

PlanResult exact_enumeration(const CullModel& m, const std::vector<int>& cand, double budget, int member) {
  const double base = baseline(m, member);
  Plan plan(m.sites.size(), 0), best_plan = plan;
  double best = 0;
  std::unordered_map<std::uint32_t, double> travel_cache;
  auto travel_of = [&](std::uint32_t mask) {
    auto it = travel_cache.find(mask);
    if (it != travel_cache.end()) return it->second;
    std::vector<int> sites;
    for (std::size_t k = 0; k < cand.size(); ++k) {
      if (mask & (1u << k)) sites.push_back(cand[k]);
    }
    const double t = travel_days(m, sites);
    travel_cache.emplace(mask, t);
    return t;
  };
  auto visit = [&](auto&& self, std::size_t k, std::uint32_t mask, double effort) -> void {
    if (k == cand.size()) {
      const double v = base - weighted_recruitment(m, plan, member);
      if (v > best) best = v, best_plan = plan;
      return;
    }
    const int site = cand[k];
    for (int l = 0; l <= m.sites[site].max_level; ++l) {
      const std::uint32_t mk = l > 0 ? mask | (1u << k) : mask;
      const double e = effort + l * m.settings.effort_step_days;
      if (e + travel_of(mk) > budget + kTol) break;  // more effort only costs more
      plan[site] = l;
      self(self, k + 1, mk, e);
    }
    plan[site] = 0;
  };
  visit(visit, 0, 0u, 0.0);
  return finish(m, best_plan, member, "exact-enumeration");
}

// One lazy-greedy pass; by_ratio: key = gain / extra cost, else key = gain.
Plan greedy_pass(const CullModel& m, const std::vector<int>& cand, double budget, int member, bool by_ratio) {
  Plan plan(m.sites.size(), 0);
  double current = weighted_recruitment(m, plan, member);
  std::vector<int> tour = {-1};  // insertion order of the sites visited; -1 = home port
  const double day_km = m.settings.speed_knots * 1.852 * m.settings.hours_per_day;
  auto pos = [&](int s) { return s + 1; };
  const std::size_t n1 = m.sites.size() + 1;
  auto km = [&](int a, int b) {
    return m.travel ? m.distance_km[static_cast<std::size_t>(pos(a)) * n1 + static_cast<std::size_t>(pos(b))] : 0.0;
  };
  auto insertion_days = [&](int s) {
    if (!m.travel) return 0.0;
    double best = std::numeric_limits<double>::infinity();
    for (std::size_t k = 0; k < tour.size(); ++k) {
      const int a = tour[k], b = tour[(k + 1) % tour.size()];
      best = std::min(best, km(a, s) + km(s, b) - km(a, b));
    }
    return best / day_km;
  };
  struct Entry {
    double key;
    int site;
    int stamp;
    bool operator<(const Entry& o) const { return key < o.key || (key == o.key && site > o.site); }
  };
  std::priority_queue<Entry> heap;
  int iteration = 0;
  auto evaluate = [&](int s) {
    Plan trial = plan;
    ++trial[s];
    const double gain = current - weighted_recruitment(m, trial, member);
    const double extra = m.settings.effort_step_days + (plan[s] == 0 ? insertion_days(s) : 0.0);
    return Entry{by_ratio ? gain / extra : gain, s, iteration};
  };
  for (int s : cand) heap.push(evaluate(s));
  double cost = 0;
  while (!heap.empty()) {
    Entry top = heap.top();
    heap.pop();
    if (plan[top.site] >= m.sites[top.site].max_level) continue;
    if (top.stamp != iteration) {
      heap.push(evaluate(top.site));
      continue;
    }
    if (!(top.key > 0)) break;
    Plan trial = plan;
    ++trial[top.site];
    const double trial_cost = plan_cost(m, trial);
    if (trial_cost > budget + kTol) continue;  // costs only grow: this reef stays out of reach
    if (plan[top.site] == 0 && m.travel) {
      std::size_t at = 1;
      double best = std::numeric_limits<double>::infinity();
      for (std::size_t k = 0; k < tour.size(); ++k) {
        const int a = tour[k], b = tour[(k + 1) % tour.size()];
        const double extra = km(a, top.site) + km(top.site, b) - km(a, b);
        if (extra < best) best = extra, at = k + 1;
      }
      tour.insert(tour.begin() + static_cast<std::ptrdiff_t>(at), top.site);
    }
    plan = std::move(trial);
    cost = trial_cost;
    current = weighted_recruitment(m, plan, member);
    ++iteration;
    if (plan[top.site] < m.sites[top.site].max_level) heap.push(Entry{top.key, top.site, -1});
  }
  (void)cost;
  return plan;
}

bool curves_concave(const CullModel& m, const std::vector<int>& cand, int member) {
  for (int s : cand) {
    const auto g = site_gains(m, s, member);
    for (std::size_t l = 2; l < g.size(); ++l) {
      if (g[l] - g[l - 1] > (g[l - 1] - g[l - 2]) * (1 + 1e-9) + 1e-12 * g.back()) return false;
    }
  }
  return true;
}

}  // namespace

std::vector<int> candidate_sites(const CullModel& m, int member) {
  const double base = baseline(m, member);
  std::vector<int> out;
  for (std::size_t s = 0; s < m.sites.size(); ++s) {
    if (m.sites[s].max_level <= 0) continue;
    Plan p(m.sites.size(), 0);
    p[s] = m.sites[s].max_level;
    if (base - weighted_recruitment(m, p, member) > 1e-12 * base) out.push_back(static_cast<int>(s));
  }
  return out;
}

PlanResult optimise(const CullModel& m, double budget, int member, const std::string& method_in) {
  const std::string method = method_in.empty() ? m.settings.method : method_in;
  const std::vector<int> cand = candidate_sites(m, member);
  const bool one_season = m.settings.horizon_seasons <= 1;
  double plans = 1;
  for (int s : cand) plans *= m.sites[s].max_level + 1;
  if (method != "greedy") {
    if (one_season && !m.travel) {
      const double cells = static_cast<double>(cand.size()) * (m.steps_in(budget) + 1.0);
      if (cells <= kDpCellLimit) return exact_dp(m, cand, budget, member);
    } else if (one_season && static_cast<int>(cand.size()) <= m.settings.exact_max_reefs) {
      return exact_sets(m, cand, budget, member);
    } else if (!one_season && plans <= m.settings.exact_max_plans && cand.size() <= 30) {
      return exact_enumeration(m, cand, budget, member);
    }
  }
  PlanResult a = finish(m, greedy_pass(m, cand, budget, member, true), member, "greedy");
  PlanResult b = finish(m, greedy_pass(m, cand, budget, member, false), member, "greedy");
  PlanResult r = b.averted > a.averted ? b : a;
  r.guarantee_applies = one_season && !m.travel && curves_concave(m, cand, member);
  r.guarantee = r.guarantee_applies ? 0.5 * (1.0 - std::exp(-1.0)) : 0.0;
  return r;
}

std::vector<CurvePoint> budget_curve(const CullModel& m, double budget, int points,
                                     std::vector<PlanResult>* plans) {
  const double step = m.settings.effort_step_days;
  const int total_steps = m.steps_in(budget);
  const int per = std::max(1, (total_steps + std::max(points, 1) - 1) / std::max(points, 1));
  std::vector<double> budgets;
  for (int k = 0; k * per <= total_steps; ++k) budgets.push_back(k * per * step);
  if (budgets.back() < budget - kTol) budgets.push_back(budget);
  const double base = baseline(m, -1);
  std::vector<CurvePoint> out;
  PlanResult prev;
  prev.plan.assign(m.sites.size(), 0);
  for (double b : budgets) {
    PlanResult r = optimise(m, b, -1);
    if (!out.empty() && prev.averted > r.averted) r = prev;
    CurvePoint c;
    c.budget_days = b;
    c.averted = r.averted;
    c.averted_pct = base > 0 ? 100.0 * r.averted / base : 0.0;
    c.cost_days = r.cost_days;
    c.reefs = static_cast<int>(sites_in(r.plan).size());
    c.method = r.method;
    if (!out.empty() && b > out.back().budget_days) {
      c.marginal_per_day = (c.averted - out.back().averted) / (b - out.back().budget_days);
    }
    out.push_back(c);
    if (plans != nullptr) plans->push_back(r);
    prev = r;
  }
  return out;
}

}  // namespace cullcast::cull
