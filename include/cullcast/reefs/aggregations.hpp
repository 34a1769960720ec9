#pragma once
// Observed spawning aggregations: point detections read from CSV, grouped by
// single-linkage clustering on geodesic distance, each attached to a reef.
//
//   lon,lat,count,mean_diameter_cm,observed_at,notes
//   150.2141,-20.1187,35,31.5,2025-11-28T21:40:00Z,seen from the surface
//
// lon, lat (degrees, WGS84) and count (animals, >= 0) are required;
// mean_diameter_cm, observed_at (ISO 8601) and notes are optional.
#include <filesystem>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include "cullcast/base/civil_time.hpp"
#include "cullcast/reefs/reef_set.hpp"

namespace cullcast::reefs {

struct Detection {
  LonLat at;                                  // degrees
  double count = 0;                           // animals seen
  std::optional<double> mean_diameter_cm;     // cm
  std::optional<CivilTime> observed_at;       // UTC
  long line = 0;                              // line in the CSV
};

struct Aggregation {
  std::string id;                  // "AGG-<n>", n from 1 in order of each group's first detection
  std::vector<std::size_t> members;  // indices into the detections, file order
  std::vector<LonLat> points;      // their positions
  std::vector<double> counts;      // their counts
  double adults = 0;               // sum of counts
  int reef_index = -1;             // reef it lies on / attaches to, or -1
  double distance_m = 0;           // 0 when on the reef, else geodesic distance to its edge
};

// InputError naming file, line and column for a missing column, a value that
// is not a number, a longitude/latitude out of range, a negative count, a bad
// time. An empty table (header only) gives no detections.
std::vector<Detection> load_detections(const std::filesystem::path& file);

// Single-linkage groups: two detections closer than cluster_distance_m
// (geodesic, WGS84) are in the same group, transitively. Attachment: the reef
// that holds most of the group's animals (lowest index on a tie); if no
// detection lies on a reef, the reef whose edge is nearest to any detection
// when within attach_tolerance_m; else none (-1).
std::vector<Aggregation> cluster_detections(const std::vector<Detection>& detections,
                                            const ReefSet& reefs, double cluster_distance_m,
                                            double attach_tolerance_m);

}  // namespace cullcast::reefs
