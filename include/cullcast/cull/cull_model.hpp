#pragma once
// CONTRACT. The cull decision model: who spawns where, what culling removes,
// what it costs, and how much settlement on the priority reefs it averts.
//
// Orientation as in network/connectivity_matrix.hpp: P_ij, row i = SOURCE
// (release source of the settlement file), column j = SINK reef. One matrix
// per spawning event ("member"); member -1 = the mean over members.
//
// Objective (horizon 1): R = sum_j w_j sum_i L_i P_ij, L_i the larvae released
// by source i after the cull (larval_output.hpp), w_j the priority weight of
// reef j (0 for reefs that are not priority reefs). Averted = R(no cull) - R(plan).
// Horizon H > 1: a stage-structured projection, one step per season:
//   settlers_j(t) = sum_i L_i(t) P_ij;   objective = sum_{t<H} sum_j w_j settlers_j(t)
//   adults_i(t+1) = s_a adults_i(t) + s_juv settlers_{reef(i)}(t + 1 - m)
// (s_a adult survival per year, m maturation delay in seasons, s_juv the
// settler-to-adult survival (1 - mu)^early_days * s_later^(m - early_days/365)).
// Culling happens once, before the first spawning.
//
// Effort on a site (reef) is level x effort_step_days vessel-days and removes
// the share 1 - exp(-effort x efficiency / area) of the adults of every source
// on that reef (its own and attached aggregations). A plan's cost is its effort
// plus travel: the closed tour home port -> reefs -> home port at
// speed_knots, hours_per_day working hours per vessel-day (0 without a port).
#include <cstdint>
#include <string>
#include <vector>

#include "cullcast/network/connectivity_matrix.hpp"
#include "cullcast/reefs/reef_set.hpp"
#include "cullcast/study/study.hpp"

namespace cullcast::cull {

using network::SparseMatrix;

struct CullSource {
  std::string id;
  int reef = -1;             // reef (sink) the source lies on, or -1
  int site = -1;             // index into CullModel::sites, or -1 (cannot be culled)
  bool aggregation = false;
  double adults = 0;         // adults before culling
  double eggs_per_female = 0;  // mean fecundity of its females, eggs per season
};

struct CullSite {
  int reef = -1;             // reef (sink) index
  std::string id, name;
  double area_ha = 0;        // hectares
  reefs::LonLat position;    // reef centroid, degrees
  int max_level = 0;         // effort cap, in effort steps
  std::vector<int> sources;  // sources on this reef
};

using Plan = std::vector<int>;  // effort level per site; effort = level x effort_step_days

struct CullModel {
  study::CullSettings settings;
  std::vector<CullSource> sources;
  std::vector<CullSite> sites;
  std::vector<std::string> reef_ids;
  std::vector<double> reef_area_ha;     // per reef
  std::vector<double> weights;          // per reef: priority weight w_j (0 = not protected)
  std::vector<int> reef_source;         // per reef: its reef-kind source (settlers become its adults), or -1
  std::vector<std::string> member_labels;
  std::vector<SparseMatrix> members;    // per event, sources x sinks
  SparseMatrix mean;                    // mean over members
  std::vector<std::vector<double>> value_per_larva;  // [member + 1][source]: sum_j w_j P_ij
  bool travel = false;                  // a home port was given
  std::vector<double> distance_km;      // (sites + 1)^2, index 0 = home port; empty without travel

  std::size_t member_count() const { return members.size(); }
  const SparseMatrix& matrix(int member) const { return member < 0 ? mean : members.at(member); }
  int steps_in(double days) const;      // whole effort steps in `days` (tolerant of rounding)
};

// Builds the model. `adults` and `eggs` have one entry per connectivity source;
// `priority` one per reef (the reef layer's priority, 0..1). Sites are the
// reefs holding adults (effort cap > 0). Throws InputError when no reef has a
// priority above the threshold.
CullModel build_model(const network::Connectivity& c, const reefs::ReefSet& reefs,
                      const std::vector<double>& adults, const std::vector<double>& eggs,
                      const study::CullSettings& settings);

double removed_fraction(const CullModel& m, int site, int level);
double effort_days(const CullModel& m, const Plan& plan);
// Length of the closed tour home -> sites -> home, km: exact (Held-Karp dynamic
// programming) up to 12 sites, otherwise cheapest insertion then 2-opt.
double tour_km(const CullModel& m, const std::vector<int>& sites);
double travel_days(const CullModel& m, const std::vector<int>& sites);
std::vector<int> sites_in(const Plan& plan);
double plan_cost(const CullModel& m, const Plan& plan);  // effort + travel, vessel-days

// Weighted settlement on priority reefs over the horizon (larvae, weighted).
double weighted_recruitment(const CullModel& m, const Plan& plan, int member = -1);
double baseline(const CullModel& m, int member = -1);  // no cull
double averted(const CullModel& m, const Plan& plan, int member = -1);

// Larvae released per source in the first season under a plan.
std::vector<double> source_larvae(const CullModel& m, const Plan& plan);

double settler_to_adult_survival(const study::CullSettings& s);

}  // namespace cullcast::cull
