#pragma once
// The briefing: one self-contained HTML page (inline CSS and SVG, nothing
// fetched) for a manager, built from results the stages already wrote. This
// module draws and formats; it computes no science (docs/briefing.md).
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/reefs/reef_set.hpp"

namespace cullcast::report {

struct InputFile {
  std::string role;           // "scenario", "currents", "reef layer", ...
  std::filesystem::path path;
  std::uintmax_t bytes = 0;
  std::string sha256;         // lower-case hex
};

struct ReefResult {             // per reef, layer order (from reef_metrics.csv)
  std::string role;             // source | sink | exchange | isolated
  double larval_output = 0;     // units of L (surveyed adults)
  double local_retention = 0;   // 0..1
  double self_recruitment = 0;  // 0..1, NaN = no settlers
  double settlement_success = 0;
  double export_strength = 0, import_strength = 0;  // larvae, units of L
  double settle_probability = 0;  // larvae settled here / larvae released anywhere, mean over events
  double settled_per_ha = 0;      // larvae represented settling here per hectare, mean per event
};

struct Link {                   // reef-to-reef link, mean over spawning events
  int from = 0, to = 0;         // reef indices
  double mean = 0, sd = 0, min = 0, max = 0;  // probability, dimensionless
};

struct AggregationPoint {
  std::string id;
  double lon = 0, lat = 0;      // degrees, mean of its detections
  double adults = 0;
  int reef = -1;
};

struct CullRow {                // one row of cull_ranking.csv
  int rank = 0;
  std::string reef_id;
  int reef = -1;                // index into reefs, -1 when not found
  double effort_days = 0;       // vessel-days
  double averted_pct = 0, cumulative_pct = 0;  // %
  double member_mean = 0, member_p10 = 0;     // weighted larvae
  double in_best_share = 0;     // 0..1
  bool one_night = false;
  std::string explanation;
};

struct CurvePoint {             // one row of cull_curve.csv
  double budget_days = 0, averted_pct = 0, cost_days = 0;
  int reefs = 0;
};

// Land mask of the currents grid: node (i, j) at lon0 + i dlon, lat0 + j dlat.
struct LandGrid {
  std::size_t nx = 0, ny = 0;
  double lon0 = 0, lat0 = 0, dlon = 0, dlat = 0;  // degrees
  std::vector<std::uint8_t> land;                 // ny*nx, row j = latitude index
  bool empty() const { return nx == 0 || ny == 0; }
};

struct BriefingData {
  std::string title, description;
  std::string version, generated_utc;  // ISO 8601
  std::uint64_t seed = 0;
  std::string scenario_text;
  std::vector<std::string> overrides;
  std::vector<std::string> settings;   // "key = value" lines echoed
  std::vector<InputFile> inputs;
  std::vector<std::string> event_labels;
  std::vector<reefs::Reef> reefs;
  std::vector<ReefResult> results;     // one per reef
  std::vector<Link> links;             // every non-zero reef-to-reef link
  std::vector<std::vector<double>> matrix;  // mean reef-to-reef P, [from][to]
  std::vector<AggregationPoint> aggregations;
  LandGrid land;
  bool cull_present = false;
  std::vector<CullRow> ranking;
  std::vector<CurvePoint> curve;
  double priority_threshold = 0;       // priority > threshold marks a priority reef
  int max_links = 25;                  // strongest links drawn on the map
  std::vector<std::string> warnings;
  // HTML placed first, right under the title (e.g. "What changed since the
  // last plan", comparison_section.hpp); empty = none. Already escaped.
  std::string opening_html;
};

// --- pieces, public for tests ------------------------------------------------
std::string html_escape(const std::string& text);

// Equirectangular projection of a lon/lat box onto a pixel frame, x scaled by
// cos(mid latitude) so that short distances keep their proportions.
struct MapFrame {
  double lon_min = 0, lon_max = 1, lat_min = 0, lat_max = 1;  // degrees
  double left = 0, top = 0, width = 1, height = 1;            // pixels of the plot area
  double x(double lon) const { return left + (lon - lon_min) / (lon_max - lon_min) * width; }
  double y(double lat) const { return top + (lat_max - lat) / (lat_max - lat_min) * height; }
  // Frame of `width` pixels for a box, height from the cos(mid latitude) aspect.
  static MapFrame fit(double lon_min, double lon_max, double lat_min, double lat_max, double left,
                      double top, double width);
};

// The lon/lat box that holds the reefs, aggregations and land grid, with a margin.
MapFrame map_frame(const BriefingData& d, double left, double top, double width);

// Colour of a role (colour-blind-safe palette, docs/briefing.md).
std::string role_colour(const std::string& role);

std::string svg_role_map(const BriefingData& d);        // the main map
std::string svg_settlement_map(const BriefingData& d);  // settlement probability by reef
std::string svg_budget_curve(const BriefingData& d);    // % averted vs budget
std::string svg_robustness(const BriefingData& d);      // contribution per ranked reef, with spread
std::string svg_matrix(const BriefingData& d);          // heat map, reefs ordered by position

// Reef indices ordered by position: along the longer side of the box (west to
// east or south to north), then across it.
std::vector<int> position_order(const std::vector<reefs::Reef>& reefs);

std::string render_briefing_html(const BriefingData& d);
// The page's style sheet, for other pages in the same style.
const char* briefing_css();
// Writes the page atomically.
void write_briefing_html(const std::filesystem::path& file, const BriefingData& d);

}  // namespace cullcast::report
