#include "cullcast/reefs/aggregations.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>
#include <stdexcept>

#include "cullcast/base/error.hpp"
#include "cullcast/reefs/reef_geometry.hpp"
#include "csv_table.hpp"

namespace cullcast::reefs {

std::vector<Detection> load_detections(const std::filesystem::path& file) {
  const csv::Table t = csv::read(file);
  const int lon_col = t.require_column("lon");
  const int lat_col = t.require_column("lat");
  const int count_col = t.require_column("count");
  const int diameter_col = t.column("mean_diameter_cm");
  const int time_col = t.column("observed_at");
  std::vector<Detection> out;
  for (const auto& row : t.rows) {
    Detection d;
    d.line = row.line;
    d.at.lon = t.number_in(row, lon_col, -180, 180, "a longitude in degrees east");
    d.at.lat = t.number_in(row, lat_col, -90, 90, "a latitude in degrees north");
    d.count = t.non_negative(row, count_col, "a count of animals");
    if (diameter_col >= 0 && !row.fields[static_cast<std::size_t>(diameter_col)].empty()) {
      d.mean_diameter_cm = t.non_negative(row, diameter_col, "a mean diameter in cm");
    }
    if (time_col >= 0 && !row.fields[static_cast<std::size_t>(time_col)].empty()) {
      try {
        d.observed_at = parse_iso8601(row.fields[static_cast<std::size_t>(time_col)]);
      } catch (const std::invalid_argument& e) {
        throw InputError(t.where(row, time_col) + ": expected an ISO 8601 time, found \"" +
                         row.fields[static_cast<std::size_t>(time_col)] + "\": " + e.what());
      }
    }
    out.push_back(d);
  }
  return out;
}

namespace {
std::size_t find_root(std::vector<std::size_t>& parent, std::size_t i) {
  while (parent[i] != i) {
    parent[i] = parent[parent[i]];
    i = parent[i];
  }
  return i;
}
}  // namespace

std::vector<Aggregation> cluster_detections(const std::vector<Detection>& detections,
                                            const ReefSet& reefs, double cluster_distance_m,
                                            double attach_tolerance_m) {
  const std::size_t n = detections.size();
  std::vector<std::size_t> parent(n);
  std::iota(parent.begin(), parent.end(), 0);
  // Sweep in latitude order; only pairs within the distance in latitude are measured.
  std::vector<std::size_t> by_lat(n);
  std::iota(by_lat.begin(), by_lat.end(), 0);
  std::sort(by_lat.begin(), by_lat.end(),
            [&](std::size_t a, std::size_t b) { return detections[a].at.lat < detections[b].at.lat; });
  // 110 km per degree of latitude is below the WGS84 minimum (110.57 km at the equator).
  const double lat_window = cluster_distance_m / 110000.0;
  for (std::size_t i = 0; i < n; ++i) {
    const Detection& a = detections[by_lat[i]];
    for (std::size_t j = i + 1; j < n; ++j) {
      const Detection& b = detections[by_lat[j]];
      if (b.at.lat - a.at.lat > lat_window) break;
      if (geodesic_distance_m(a.at, b.at) <= cluster_distance_m) {
        const std::size_t ra = find_root(parent, by_lat[i]), rb = find_root(parent, by_lat[j]);
        if (ra != rb) parent[std::max(ra, rb)] = std::min(ra, rb);
      }
    }
  }
  // Groups numbered in order of their first detection in the file.
  std::map<std::size_t, std::size_t> group_of_root;
  std::vector<Aggregation> groups;
  for (std::size_t i = 0; i < n; ++i) {
    const std::size_t root = find_root(parent, i);
    auto [it, fresh] = group_of_root.emplace(root, groups.size());
    if (fresh) {
      groups.emplace_back();
      groups.back().id = "AGG-" + std::to_string(groups.size());
    }
    Aggregation& g = groups[it->second];
    g.members.push_back(i);
    g.points.push_back(detections[i].at);
    g.counts.push_back(detections[i].count);
    g.adults += detections[i].count;
  }

  // Attachment.
  const auto& all = reefs.reefs();
  for (auto& g : groups) {
    std::map<int, double> on_reef;  // reef -> animals on it
    for (std::size_t m = 0; m < g.points.size(); ++m) {
      for (std::size_t k = 0; k < all.size(); ++k) {
        if (contains(all[k], g.points[m])) {
          on_reef[static_cast<int>(k)] += g.counts[m];
          break;  // lowest index wins where reefs overlap
        }
      }
    }
    if (!on_reef.empty()) {
      double best = -1;
      for (const auto& [k, animals] : on_reef) {
        if (animals > best) {  // map order: lowest index wins a tie
          best = animals;
          g.reef_index = k;
        }
      }
      g.distance_m = 0;
      continue;
    }
    double best = std::numeric_limits<double>::infinity();
    for (const auto& p : g.points) {
      const LocalMetric m = LocalMetric::at(p.lat);
      // Generous box in degrees (x1.1) before measuring exactly.
      const double dlon = 1.1 * attach_tolerance_m / m.m_per_deg_lon + 1e-9;
      const double dlat = 1.1 * attach_tolerance_m / m.m_per_deg_lat + 1e-9;
      for (std::size_t k = 0; k < all.size(); ++k) {
        const Reef& r = all[k];
        if (p.lon < r.lon_min - dlon || p.lon > r.lon_max + dlon || p.lat < r.lat_min - dlat ||
            p.lat > r.lat_max + dlat) {
          continue;
        }
        const double d = distance_to_edge_m(r, p);
        if (d <= attach_tolerance_m && d < best) {
          best = d;
          g.reef_index = static_cast<int>(k);
          g.distance_m = d;
        }
      }
    }
  }
  return groups;
}

}  // namespace cullcast::reefs
