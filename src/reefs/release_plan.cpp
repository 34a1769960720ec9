#include "cullcast/reefs/release_plan.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "cullcast/base/error.hpp"
#include "cullcast/base/random.hpp"
#include "cullcast/reefs/aggregations.hpp"
#include "cullcast/reefs/reef_geometry.hpp"
#include "cullcast/reefs/surveys.hpp"

namespace cullcast::reefs {
namespace {

constexpr double kDeg = 3.14159265358979323846 / 180.0;
constexpr std::uint32_t kMaxAttempts = 1u << 20;  // rejection tries per particle before giving up

void uniform_points(const Reef& reef, std::uint32_t event_index, std::uint32_t source, int n,
                    const CounterRandom& rng, std::vector<LonLat>& out) {
  const double s0 = std::sin(reef.lat_min * kDeg), s1 = std::sin(reef.lat_max * kDeg);
  for (int p = 0; p < n; ++p) {
    const StreamId stream{event_index, source, static_cast<std::uint32_t>(p)};
    bool placed = false;
    // The step counter numbers the attempts, so each try has its own draw.
    for (std::uint32_t attempt = 0; attempt < kMaxAttempts && !placed; ++attempt) {
      const auto u = rng.uniform2(stream, attempt, Draw::release_position);
      const LonLat q{reef.lon_min + u[0] * (reef.lon_max - reef.lon_min),
                     std::asin(s0 + u[1] * (s1 - s0)) / kDeg};
      if (contains(reef, q)) {
        out.push_back(q);
        placed = true;
      }
    }
    if (!placed) {
      throw InputError("reef \"" + reef.id + "\": no point inside the polygon after " +
                       std::to_string(kMaxAttempts) +
                       " random tries; the reef is too thin for uniform placement (try placement = \"lattice\")");
    }
  }
}

// Local Lambert cylindrical equal-area frame centred on the reef: equal areas
// map to equal areas (on the sphere) and shapes are true at the centre.
struct EqualAreaFrame {
  double lon0, c0, s0;
  double x(double lon) const { return (lon - lon0) * kDeg * c0; }
  double y(double lat) const { return (std::sin(lat * kDeg) - s0) / c0; }
  double lon(double x) const { return lon0 + x / (c0 * kDeg); }
  double lat(double y) const { return std::asin(std::clamp(y * c0 + s0, -1.0, 1.0)) / kDeg; }
};

// Lattice points (row by row, south to north, west to east) inside the reef.
std::size_t lattice(const Reef& reef, const EqualAreaFrame& f, double spacing, std::vector<LonLat>* out) {
  const double x0 = f.x(reef.lon_min), x1 = f.x(reef.lon_max);
  const double y0 = f.y(reef.lat_min), y1 = f.y(reef.lat_max);
  std::size_t count = 0;
  for (double y = y0 + spacing / 2; y < y1; y += spacing) {
    const double lat = f.lat(y);
    for (double x = x0 + spacing / 2; x < x1; x += spacing) {
      const LonLat q{f.lon(x), lat};
      if (contains(reef, q)) {
        ++count;
        if (out) out->push_back(q);
      }
    }
  }
  return count;
}

void lattice_points(const Reef& reef, int n, std::vector<LonLat>& out) {
  const double lat_c = (reef.lat_min + reef.lat_max) / 2;
  const EqualAreaFrame f{(reef.lon_min + reef.lon_max) / 2, std::cos(lat_c * kDeg), std::sin(lat_c * kDeg)};
  // Frame area of the reef, from its geodesic area over the authalic radius squared (approximately).
  constexpr double kAuthalicRadiusM = 6371007.2;
  const double area = reef.area_ha * 1e4 / (kAuthalicRadiusM * kAuthalicRadiusM);
  const auto need = static_cast<std::size_t>(n);
  double coarse = std::sqrt(area / n);  // want count(coarse) < n <= count(fine)
  double fine = coarse;
  for (int i = 0; i < 60 && lattice(reef, f, fine, nullptr) < need; ++i) fine /= 1.25;
  for (int i = 0; i < 60 && lattice(reef, f, coarse, nullptr) >= need; ++i) coarse *= 1.25;
  if (lattice(reef, f, fine, nullptr) < need) {
    throw InputError("reef \"" + reef.id + "\": cannot fit " + std::to_string(n) + " lattice points inside");
  }
  for (int i = 0; i < 40; ++i) {
    const double mid = std::sqrt(coarse * fine);
    const std::size_t c = lattice(reef, f, mid, nullptr);
    if (c == need) {
      fine = mid;
      break;
    }
    (c > need ? fine : coarse) = mid;
  }
  std::vector<LonLat> all;
  lattice(reef, f, fine, &all);
  // Evenly thin the row-ordered points when the lattice has more than n.
  for (std::size_t i = 0; i < need; ++i) {
    out.push_back(all[static_cast<std::size_t>((static_cast<double>(i) + 0.5) * all.size() / need)]);
  }
}

// Smooth weighted round-robin: each point gets a share of particles
// proportional to its weight, interleaved rather than in blocks.
void aggregation_points(const ReleaseSource& s, int n, std::vector<LonLat>& out) {
  if (s.points.empty()) throw InputError("aggregation \"" + s.id + "\" has no detection points");
  std::vector<double> w = s.point_weights;
  double total = 0;
  for (double x : w) total += x;
  if (w.size() != s.points.size() || !(total > 0)) {
    w.assign(s.points.size(), 1.0);
    total = static_cast<double>(w.size());
  }
  std::vector<double> current(w.size(), 0.0);
  for (int p = 0; p < n; ++p) {
    std::size_t pick = 0;
    for (std::size_t k = 0; k < w.size(); ++k) {
      current[k] += w[k];
      if (current[k] > current[pick]) pick = k;
    }
    current[pick] -= total;
    out.push_back(s.points[pick]);
  }
}

}  // namespace

std::vector<ReleaseSource> release_sources(const ReefSet& reefs, const study::Study& study) {
  const study::ReefSettings& settings = study.reefs;
  std::vector<double> density(reefs.size(), 0.0);
  if (!settings.surveys.empty()) {
    density = reef_densities(reefs, load_surveys(settings.surveys, reefs), settings.missing_survey);
  }
  std::vector<ReleaseSource> sources;
  for (std::size_t k = 0; k < reefs.size(); ++k) {
    ReleaseSource s;
    s.id = reefs.reefs()[k].id;
    s.kind = SourceKind::reef;
    s.reef_index = static_cast<int>(k);
    s.adults = density[k] * reefs.reefs()[k].area_ha;
    sources.push_back(std::move(s));
  }
  if (!settings.aggregations.empty()) {
    const auto groups = cluster_detections(load_detections(settings.aggregations), reefs,
                                           settings.cluster_distance_m, settings.attach_tolerance_m);
    for (const auto& g : groups) {
      ReleaseSource s;
      s.id = g.id;
      s.kind = SourceKind::aggregation;
      s.reef_index = g.reef_index;
      s.points = g.points;
      s.point_weights = g.counts;
      s.adults = g.adults;
      sources.push_back(std::move(s));
    }
  }
  return sources;
}

std::vector<ReleasePoint> plan_release(const ReefSet& reefs, const std::vector<ReleaseSource>& sources,
                                       const study::SpawningEvent& event, std::uint32_t event_index,
                                       const study::ReefSettings& settings, std::uint64_t seed) {
  std::vector<std::uint32_t> every(sources.size());
  for (std::size_t si = 0; si < sources.size(); ++si) every[si] = static_cast<std::uint32_t>(si);
  return plan_release(reefs, sources, event, event_index, settings, seed, every);
}

std::vector<ReleasePoint> plan_release(const ReefSet& reefs, const std::vector<ReleaseSource>& sources,
                                       const study::SpawningEvent& event, std::uint32_t event_index,
                                       const study::ReefSettings& settings, std::uint64_t seed,
                                       const std::vector<std::uint32_t>& only) {
  if (event.larvae_per_reef < 1) {
    throw InputError("spawning event \"" + event.label + "\": larvae_per_reef must be >= 1");
  }
  if (settings.placement != "uniform" && settings.placement != "lattice") {
    throw InputError("[reefs] placement: expected uniform or lattice, found \"" + settings.placement + "\"");
  }
  const CounterRandom rng(seed);
  const int n = event.larvae_per_reef;
  const double window_s = std::max(0.0, event.hours) * 3600.0;
  std::vector<ReleasePoint> plan;
  plan.reserve(only.size() * static_cast<std::size_t>(n));
  std::vector<LonLat> where;
  for (const std::uint32_t si : only) {
    if (si >= sources.size()) {
      throw std::invalid_argument("release source index " + std::to_string(si) + " outside the " +
                                  std::to_string(sources.size()) + " sources");
    }
    const ReleaseSource& s = sources[si];
    where.clear();
    where.reserve(static_cast<std::size_t>(n));
    if (s.kind == SourceKind::reef) {
      if (s.reef_index < 0 || static_cast<std::size_t>(s.reef_index) >= reefs.size()) {
        throw std::invalid_argument("release source \"" + s.id + "\" refers to reef index " +
                                    std::to_string(s.reef_index) + ", outside the reef set");
      }
      const Reef& reef = reefs.reefs()[static_cast<std::size_t>(s.reef_index)];
      if (settings.placement == "lattice") {
        lattice_points(reef, n, where);
      } else {
        uniform_points(reef, event_index, si, n, rng, where);
      }
    } else {
      aggregation_points(s, n, where);
    }
    for (int p = 0; p < n; ++p) {
      ReleasePoint r;
      r.lon = where[static_cast<std::size_t>(p)].lon;
      r.lat = where[static_cast<std::size_t>(p)].lat;
      r.depth_m = event.depth_m;
      r.release_offset_s = window_s * p / n;
      r.source = si;
      r.particle = static_cast<std::uint32_t>(p);
      r.weight = 1;
      plan.push_back(r);
    }
  }
  return plan;
}

}  // namespace cullcast::reefs
