// The cull decision model (docs/methods.md, "Cull prioritisation"). Tour
// lengths: Held (1962) and Karp's dynamic programming for the travelling
// salesman (Held & Karp 1962, J. SIAM 10:196-210) on small tours; cheapest
// insertion and 2-opt (Croes 1958, Oper. Res. 6:791-812) beyond.
#include "cullcast/cull/cull_model.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "cullcast/base/error.hpp"
#include "cullcast/cull/larval_output.hpp"
#include "cullcast/network/link_ensemble.hpp"
#include "cullcast/reefs/reef_geometry.hpp"

namespace cullcast::cull {
namespace {

constexpr double kKmPerNauticalMile = 1.852;  // by definition (international nautical mile)
constexpr int kExactTourMax = 12;

std::vector<double> weighted_values(const SparseMatrix& p, const std::vector<double>& w) {
  std::vector<double> v(static_cast<std::size_t>(p.rows()), 0.0);
  for (Eigen::Index i = 0; i < p.outerSize(); ++i) {
    for (SparseMatrix::InnerIterator it(p, i); it; ++it) v[i] += w[it.col()] * it.value();
  }
  return v;
}

double dist(const CullModel& m, int a, int b) {  // a, b: site index + 1 (0 = home)
  const std::size_t n = m.sites.size() + 1;
  return m.distance_km[static_cast<std::size_t>(a) * n + static_cast<std::size_t>(b)];
}

double held_karp(const CullModel& m, const std::vector<int>& sites) {
  const int n = static_cast<int>(sites.size());
  const std::size_t full = std::size_t{1} << n;
  const double inf = std::numeric_limits<double>::infinity();
  std::vector<double> best(full * n, inf);  // best[mask * n + last]: home -> mask ending at last
  for (int k = 0; k < n; ++k) best[(std::size_t{1} << k) * n + k] = dist(m, 0, sites[k] + 1);
  for (std::size_t mask = 1; mask < full; ++mask) {
    for (int last = 0; last < n; ++last) {
      const double here = best[mask * n + last];
      if (!(mask & (std::size_t{1} << last)) || here == inf) continue;
      for (int next = 0; next < n; ++next) {
        if (mask & (std::size_t{1} << next)) continue;
        const std::size_t to = mask | (std::size_t{1} << next);
        const double v = here + dist(m, sites[last] + 1, sites[next] + 1);
        if (v < best[to * n + next]) best[to * n + next] = v;
      }
    }
  }
  double out = inf;
  for (int last = 0; last < n; ++last) out = std::min(out, best[(full - 1) * n + last] + dist(m, sites[last] + 1, 0));
  return out;
}

double heuristic_tour(const CullModel& m, const std::vector<int>& sites) {
  std::vector<int> tour = {0};  // nodes: 0 home, site + 1
  for (int s : sites) {
    const int node = s + 1;
    std::size_t at = 1;
    double best = std::numeric_limits<double>::infinity();
    for (std::size_t k = 0; k < tour.size(); ++k) {
      const int a = tour[k], b = tour[(k + 1) % tour.size()];
      const double extra = dist(m, a, node) + dist(m, node, b) - dist(m, a, b);
      if (extra < best) best = extra, at = k + 1;
    }
    tour.insert(tour.begin() + static_cast<std::ptrdiff_t>(at), node);
  }
  const std::size_t n = tour.size();
  for (bool improved = true; improved;) {
    improved = false;
    for (std::size_t i = 0; i + 1 < n; ++i) {
      for (std::size_t j = i + 2; j < n; ++j) {
        const int a = tour[i], b = tour[i + 1], c = tour[j], d = tour[(j + 1) % n];
        if (a == d) continue;
        if (dist(m, a, c) + dist(m, b, d) < dist(m, a, b) + dist(m, c, d) - 1e-9) {
          std::reverse(tour.begin() + static_cast<std::ptrdiff_t>(i + 1),
                       tour.begin() + static_cast<std::ptrdiff_t>(j + 1));
          improved = true;
        }
      }
    }
  }
  double km = 0;
  for (std::size_t k = 0; k < n; ++k) km += dist(m, tour[k], tour[(k + 1) % n]);
  return km;
}

double reef_density(const CullModel& m, const CullSource& s, double adults) {
  if (s.aggregation) return m.settings.aggregation_density_per_ha;
  const double area = s.reef >= 0 ? m.reef_area_ha[s.reef] : 0.0;
  return area > 0 ? adults / area : 0.0;
}

}  // namespace

int CullModel::steps_in(double days) const {
  return static_cast<int>(std::floor(days / settings.effort_step_days + 1e-9));
}

double settler_to_adult_survival(const study::CullSettings& s) {
  const double later_years = std::max(0.0, s.maturation_seasons - s.early_juvenile_days / 365.0);
  return std::pow(1.0 - s.juvenile_mortality_per_day, s.early_juvenile_days) *
         std::pow(s.later_juvenile_survival_per_year, later_years);
}

CullModel build_model(const network::Connectivity& c, const reefs::ReefSet& reef_set,
                      const std::vector<double>& adults, const std::vector<double>& eggs,
                      const study::CullSettings& settings) {
  CullModel m;
  m.settings = settings;
  const std::size_t nr = c.sinks();
  m.reef_ids = c.sink_ids;
  m.reef_area_ha.assign(nr, 0.0);
  m.weights.assign(nr, 0.0);
  m.reef_source.assign(nr, -1);
  for (std::size_t j = 0; j < nr; ++j) {
    const int k = reef_set.index_of(c.sink_ids[j]);
    if (k < 0) continue;
    const auto& reef = reef_set.reefs()[k];
    m.reef_area_ha[j] = reef.area_ha;
    if (reef.priority > settings.priority_threshold) m.weights[j] = reef.priority;
  }
  if (std::none_of(m.weights.begin(), m.weights.end(), [](double w) { return w > 0; })) {
    throw InputError("no priority reefs: no reef of the reef layer has a priority above [cull] "
                     "priority_threshold = " + std::to_string(settings.priority_threshold) +
                     " (set [reefs] priority to the attribute holding 0..1 weights)");
  }
  std::vector<int> site_of_reef(nr, -1);
  for (std::size_t s = 0; s < c.sources(); ++s) {
    CullSource src;
    src.id = c.source_ids[s];
    src.reef = c.source_reefs[s];
    src.aggregation = c.source_kinds[s] != 0;
    src.adults = s < adults.size() ? adults[s] : 0.0;
    src.eggs_per_female = s < eggs.size() ? eggs[s] : 0.0;
    if (!src.aggregation && src.reef >= 0 && m.reef_source[src.reef] < 0) m.reef_source[src.reef] = static_cast<int>(s);
    m.sources.push_back(src);
  }
  const int cap = m.steps_in(settings.max_days_per_reef);
  for (std::size_t s = 0; s < m.sources.size(); ++s) {
    auto& src = m.sources[s];
    if (src.reef < 0 || !(src.adults > 0) || cap <= 0) continue;
    if (site_of_reef[src.reef] < 0) {
      CullSite site;
      site.reef = src.reef;
      site.id = c.sink_ids[src.reef];
      const int k = reef_set.index_of(site.id);
      site.name = k >= 0 ? reef_set.reefs()[k].name : site.id;
      site.position = k >= 0 ? reef_set.reefs()[k].centroid : reefs::LonLat{};
      site.area_ha = m.reef_area_ha[src.reef];
      site.max_level = site.area_ha > 0 ? cap : 0;
      site_of_reef[src.reef] = static_cast<int>(m.sites.size());
      m.sites.push_back(site);
    }
    src.site = site_of_reef[src.reef];
    m.sites[src.site].sources.push_back(static_cast<int>(s));
  }
  // Attached aggregations with no adults on their reef's own source still make a site above.
  m.member_labels = c.event_labels;
  for (const auto& e : c.events) m.members.push_back(e.probability);
  m.mean = network::mean_matrix(m.members);
  m.value_per_larva.push_back(weighted_values(m.mean, m.weights));
  for (const auto& p : m.members) m.value_per_larva.push_back(weighted_values(p, m.weights));

  m.travel = std::isfinite(settings.home_lon) && std::isfinite(settings.home_lat);
  if (m.travel) {
    const std::size_t n = m.sites.size() + 1;
    m.distance_km.assign(n * n, 0.0);
    auto pos = [&](std::size_t k) {
      return k == 0 ? reefs::LonLat{settings.home_lon, settings.home_lat} : m.sites[k - 1].position;
    };
    for (std::size_t a = 0; a < n; ++a) {
      for (std::size_t b = a + 1; b < n; ++b) {
        const double km = reefs::geodesic_distance_m(pos(a), pos(b)) / 1000.0;
        m.distance_km[a * n + b] = m.distance_km[b * n + a] = km;
      }
    }
  }
  return m;
}

double removed_fraction(const CullModel& m, int site, int level) {
  if (level <= 0) return 0.0;
  const double effort = level * m.settings.effort_step_days;
  return 1.0 - std::exp(-effort * m.settings.efficiency_ha_per_day / m.sites[site].area_ha);
}

double effort_days(const CullModel& m, const Plan& plan) {
  double total = 0;
  for (int l : plan) total += l * m.settings.effort_step_days;
  return total;
}

std::vector<int> sites_in(const Plan& plan) {
  std::vector<int> out;
  for (std::size_t i = 0; i < plan.size(); ++i) {
    if (plan[i] > 0) out.push_back(static_cast<int>(i));
  }
  return out;
}

double tour_km(const CullModel& m, const std::vector<int>& sites) {
  if (!m.travel || sites.empty()) return 0.0;
  return static_cast<int>(sites.size()) <= kExactTourMax ? held_karp(m, sites) : heuristic_tour(m, sites);
}

double travel_days(const CullModel& m, const std::vector<int>& sites) {
  return tour_km(m, sites) / (m.settings.speed_knots * kKmPerNauticalMile * m.settings.hours_per_day);
}

double plan_cost(const CullModel& m, const Plan& plan) {
  return effort_days(m, plan) + travel_days(m, sites_in(plan));
}

std::vector<double> source_larvae(const CullModel& m, const Plan& plan) {
  std::vector<double> out(m.sources.size(), 0.0);
  for (std::size_t s = 0; s < m.sources.size(); ++s) {
    const auto& src = m.sources[s];
    const int level = src.site >= 0 && !plan.empty() ? plan[src.site] : 0;
    const double a = src.adults * (1.0 - (src.site >= 0 ? removed_fraction(m, src.site, level) : 0.0));
    out[s] = larvae_released(a, reef_density(m, src, a), src.eggs_per_female, m.settings);
  }
  return out;
}

double weighted_recruitment(const CullModel& m, const Plan& plan, int member) {
  const auto& v = m.value_per_larva[static_cast<std::size_t>(member + 1)];
  std::vector<double> larvae = source_larvae(m, plan);
  double total = 0;
  for (std::size_t s = 0; s < larvae.size(); ++s) total += larvae[s] * v[s];
  const int horizon = m.settings.horizon_seasons;
  if (horizon <= 1) return total;

  // Stage-structured projection over later seasons.
  const SparseMatrix& p = m.matrix(member);
  const int mat = m.settings.maturation_seasons;
  const double s_juv = settler_to_adult_survival(m.settings);
  const double s_a = m.settings.adult_survival_per_year;
  const std::size_t ns = m.sources.size(), nr = m.reef_ids.size();
  std::vector<double> adults(ns);
  for (std::size_t s = 0; s < ns; ++s) {
    const auto& src = m.sources[s];
    const int level = src.site >= 0 && !plan.empty() ? plan[src.site] : 0;
    adults[s] = src.adults * (1.0 - (src.site >= 0 ? removed_fraction(m, src.site, level) : 0.0));
  }
  std::vector<std::vector<double>> arrivals(static_cast<std::size_t>(horizon + mat), std::vector<double>(ns, 0.0));
  std::vector<double> settlers(nr);
  for (int t = 0; t < horizon; ++t) {
    if (t > 0) {
      for (std::size_t s = 0; s < ns; ++s) {
        adults[s] = s_a * adults[s] + arrivals[t][s];
        const auto& src = m.sources[s];
        larvae[s] = larvae_released(adults[s], reef_density(m, src, adults[s]), src.eggs_per_female, m.settings);
        total += larvae[s] * v[s];
      }
    }
    if (t + mat >= horizon) continue;  // these settlers mature after the horizon
    std::fill(settlers.begin(), settlers.end(), 0.0);
    for (Eigen::Index i = 0; i < p.outerSize(); ++i) {
      if (!(larvae[i] > 0)) continue;
      for (SparseMatrix::InnerIterator it(p, i); it; ++it) settlers[it.col()] += larvae[i] * it.value();
    }
    for (std::size_t j = 0; j < nr; ++j) {
      if (m.reef_source[j] >= 0) arrivals[t + mat][m.reef_source[j]] += s_juv * settlers[j];
    }
  }
  return total;
}

double baseline(const CullModel& m, int member) { return weighted_recruitment(m, Plan{}, member); }

double averted(const CullModel& m, const Plan& plan, int member) {
  return baseline(m, member) - weighted_recruitment(m, plan, member);
}

}  // namespace cullcast::cull
