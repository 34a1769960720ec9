#pragma once
// Small cull instances for the tests: invented reefs on a line near 150 E, 20 S.
#include <cmath>
#include <cstdint>
#include <random>
#include <string>
#include <vector>

#include "cullcast/cull/cull_model.hpp"
#include "cullcast/network/connectivity_matrix.hpp"
#include "cullcast/reefs/reef_set.hpp"

namespace cullcast::cull::test {

// settlers[e][i][j]: particles from reef source i settling on reef j in event e;
// `released` particles per source and event.
inline drift::SettlementData settlement(const std::vector<std::vector<std::vector<int>>>& settlers,
                                        std::int64_t released) {
  drift::SettlementData d;
  const std::size_t n = settlers.at(0).size();
  for (std::size_t i = 0; i < n; ++i) {
    d.tables.source_ids.push_back("T-" + std::to_string(i));
    d.tables.source_kinds.push_back(0);
    d.tables.source_reefs.push_back(static_cast<std::int32_t>(i));
    d.tables.reef_ids.push_back("T-" + std::to_string(i));
  }
  for (std::size_t e = 0; e < settlers.size(); ++e) {
    d.tables.event_labels.push_back("night " + std::to_string(e + 1));
    d.tables.event_starts_s.push_back(86400.0 * static_cast<double>(e));
    for (std::size_t i = 0; i < n; ++i) {
      drift::FateCounts f;
      f.released = released;
      for (std::size_t j = 0; j < n; ++j) {
        for (int k = 0; k < settlers[e][i][j]; ++k) {
          d.records.push_back({static_cast<std::uint32_t>(e), static_cast<std::uint32_t>(i),
                               static_cast<std::int32_t>(j), 0.0, 20 * 86400.0, 20 * 86400.0, 1.0});
        }
        f.settled += settlers[e][i][j];
      }
      f.died = f.released - f.settled;
      d.fates.push_back(f);
    }
  }
  return d;
}

// Reefs T-0.. spaced `spacing_deg` apart in longitude; areas and priorities given.
inline reefs::ReefSet reef_line(const std::vector<double>& area_ha, const std::vector<double>& priority,
                                double spacing_deg = 0.05) {
  std::vector<reefs::Reef> out;
  for (std::size_t i = 0; i < area_ha.size(); ++i) {
    reefs::Reef r;
    r.id = r.name = "T-" + std::to_string(i);
    r.priority = priority[i];
    // A square of about area_ha[i] (compute_metrics gives the exact geodesic area).
    const double lon = 150.0 + spacing_deg * static_cast<double>(i), lat = -20.0;
    const double half_m = 0.5 * std::sqrt(area_ha[i] * 1e4);
    const double dlat = half_m / 110750.0, dlon = half_m / (111320.0 * std::cos(lat * 3.141592653589793 / 180));
    r.parts.push_back({{{lon - dlon, lat - dlat}, {lon + dlon, lat - dlat}, {lon + dlon, lat + dlat},
                        {lon - dlon, lat + dlat}, {lon - dlon, lat - dlat}}, {}});
    out.push_back(r);
  }
  return reefs::ReefSet(std::move(out));
}

// A random instance: n reefs, `events` members, priority on the last two reefs.
struct Instance {
  network::Connectivity connectivity;
  reefs::ReefSet reefs;
  std::vector<double> adults, eggs;
};
inline Instance random_instance(std::uint32_t seed, int n, int events) {
  std::mt19937 rng(seed);
  std::uniform_int_distribution<int> count(0, n <= 30 ? 30 : 1000 / n);  // a row never exceeds 1000 released
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  std::vector<std::vector<std::vector<int>>> s(events, std::vector<std::vector<int>>(n, std::vector<int>(n)));
  for (auto& ev : s) {
    for (auto& row : ev) {
      for (auto& v : row) v = unit(rng) < 0.5 ? count(rng) : 0;
    }
  }
  std::vector<double> area, prio;
  Instance in;
  for (int i = 0; i < n; ++i) {
    area.push_back(20 + 80 * unit(rng));
    prio.push_back(i >= n - 2 ? 0.5 + 0.5 * unit(rng) : 0.0);
    in.adults.push_back(area.back() * (1 + 200 * unit(rng)));  // 1..200 adults per ha
    in.eggs.push_back(33.5e6);
  }
  in.connectivity = network::build_connectivity(settlement(s, 1000), "random instance");
  in.reefs = reef_line(area, prio);
  return in;
}

}  // namespace cullcast::cull::test
