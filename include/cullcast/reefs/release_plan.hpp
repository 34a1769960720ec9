#pragma once
// CONTRACT. Where and when larvae start: one ReleasePoint per simulated
// particle, for one spawning event. Deterministic: positions come from the
// counter-based generator keyed by (seed, event, source, particle).
#include <cstdint>
#include <string>
#include <vector>

#include "cullcast/reefs/reef_set.hpp"
#include "cullcast/study/study.hpp"

namespace cullcast::reefs {

enum class SourceKind : std::uint8_t { reef, aggregation };

// Something that releases larvae: a whole reef, or an observed aggregation.
struct ReleaseSource {
  std::string id;            // reef id, or aggregation id (e.g. "AGG-3")
  SourceKind kind = SourceKind::reef;
  int reef_index = -1;       // reef it lies on (aggregations: attached reef, or -1)
  std::vector<LonLat> points;  // aggregations: the detections' positions
  std::vector<double> point_weights;  // aggregations: animals seen at each point (empty = equal)
  double adults = 0;         // estimated adults (density x area, or counts)
};

struct ReleasePoint {
  double lon = 0, lat = 0;     // degrees
  double depth_m = 0;          // metres below the surface
  double release_offset_s = 0; // seconds after the event start
  std::uint32_t source = 0;    // index into the sources vector
  std::uint32_t particle = 0;  // index within its source (for random streams)
  double weight = 1;           // larvae represented (1 until scaled by larval output)
};

// Sources for a study: every reef (adults = surveyed density x area, with the
// missing_survey policy; 0 without a survey table), then every aggregation
// (adults = sum of its counts) when the scenario has them.
std::vector<ReleaseSource> release_sources(const ReefSet& reefs, const study::Study& study);

// Release points for one event, sources in order, particles in order within
// each source (spatially grouped, which keeps the drift loop cache-friendly).
// event.larvae_per_reef particles per source. Reefs: settings.placement
// "uniform" (uniform by area on the sphere: uniform in lon and sin(lat) within
// the bounding box, rejected outside the polygon; across a reef a few km wide
// the WGS84 area density differs from this by ~1e-5 relative) or
// "lattice" (exactly N points of a square lattice in a local equal-area frame:
// the coarsest lattice with at least N points inside, thinned evenly when it
// has more). Aggregations: at the detections, smooth weighted round-robin by
// count. Release offset of particle i of N: event.hours * 3600 * i / N.
// Depth: event.depth_m. Throws InputError if a reef is too thin to seed.
std::vector<ReleasePoint> plan_release(const ReefSet& reefs,
                                       const std::vector<ReleaseSource>& sources,
                                       const study::SpawningEvent& event, std::uint32_t event_index,
                                       const study::ReefSettings& settings, std::uint64_t seed);

// The part of that plan for the sources listed in `only` (indices into
// `sources`, ascending): the same points, in the same order, as in the full
// plan, so a run shared across processes drifts the same larvae.
std::vector<ReleasePoint> plan_release(const ReefSet& reefs,
                                       const std::vector<ReleaseSource>& sources,
                                       const study::SpawningEvent& event, std::uint32_t event_index,
                                       const study::ReefSettings& settings, std::uint64_t seed,
                                       const std::vector<std::uint32_t>& only);

}  // namespace cullcast::reefs
