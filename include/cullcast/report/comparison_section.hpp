#pragma once
// The comparison of two runs as a briefing section (tables and a slope chart
// of the cull ranking, inline SVG) and as a page of its own in the briefing's
// style. Draws and formats only; the numbers come from compare::compare_runs.
#include <filesystem>
#include <string>

#include "cullcast/compare/run_comparison.hpp"

namespace cullcast::report {

struct ComparisonLabels {
  std::string heading = "Comparison";  // e.g. "What changed since the last plan"
  std::string name_a = "A";            // short names of the two runs
  std::string name_b = "B";
  int max_links = 15;  // rows in the table of changed links
};

// Slope chart: each reef in either plan, its rank in A (left) joined to its
// rank in B (right); reefs outside a plan sit on a "not in plan" row.
std::string svg_rank_slope(const compare::RunComparison& c, const ComparisonLabels& labels);

// <section> with key figures, the slope chart and tables; every string escaped.
std::string render_comparison_section(const compare::RunComparison& c,
                                      const ComparisonLabels& labels);

// A self-contained page holding the section; written atomically.
void write_comparison_html(const std::filesystem::path& file, const compare::RunComparison& c,
                           const ComparisonLabels& labels);

}  // namespace cullcast::report
