// The comparison section: key figures, a slope chart of the cull ranking and
// tables of changed links, roles and ranks, in the briefing's style.
#include "cullcast/report/comparison_section.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <sstream>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/report/briefing.hpp"
#include "html_numbers.hpp"

namespace cullcast::report {
namespace {



}  // namespace

std::string svg_rank_slope(const compare::RunComparison& c, const ComparisonLabels& labels) {
  int max_rank = 0;
  for (const auto& r : c.reefs) max_rank = std::max({max_rank, r.rank_a, r.rank_b});
  const int rows = max_rank + 1;  // the last row: "not in plan"
  const double top = 34, step = 18, left = 150, right = 370, width = 520;
  const double height = top + step * rows + 16;
  auto y = [&](int rank) { return top + step * ((rank == 0 ? rows : rank) - 1); };
  std::ostringstream s;
  s << "<svg xmlns='http://www.w3.org/2000/svg' class='rank-slope' viewBox='0 0 " << width << " "
    << height << "' width='" << width << "' height='" << height
    << "' role='img' aria-label='cull ranking in " << html_escape(labels.name_a) << " and "
    << html_escape(labels.name_b) << "' font-size='11' font-family='DejaVu Sans, sans-serif'>\n";
  s << "<text x='" << left << "' y='16' text-anchor='middle' font-weight='bold'>"
    << html_escape(labels.name_a) << "</text><text x='" << right
    << "' y='16' text-anchor='middle' font-weight='bold'>" << html_escape(labels.name_b)
    << "</text>\n";
  s << "<line x1='" << left << "' y1='" << y(rows) - 9 << "' x2='" << right << "' y2='"
    << y(rows) - 9 << "' stroke='#d5dbe0' stroke-dasharray='3 3'/>\n";
  s << "<text x='" << (left + right) / 2 << "' y='" << y(rows) + 4
    << "' text-anchor='middle' fill='#5a6670'>not in plan</text>\n";
  for (const auto& r : c.reefs) {
    if (r.rank_a == 0 && r.rank_b == 0) continue;
    // Colour: steel blue = moved up or entered, rust = moved down or left, grey = same rank.
    const bool up = (r.rank_b != 0 && (r.rank_a == 0 || r.rank_b < r.rank_a));
    const bool same = r.rank_a == r.rank_b;
    const char* colour = same ? "#7a7a7a" : (up ? "#2f6fae" : "#b2461d");
    s << "<g class='slope' data-reef='" << html_escape(r.reef_id) << "' data-rank-a='" << r.rank_a
      << "' data-rank-b='" << r.rank_b << "'><title>" << html_escape(r.reef_id) << ": ";
    auto rank_text = [&s](int rank) {
      if (rank) {
        s << '#' << rank;
      } else {
        s << "not in plan";
      }
    };
    rank_text(r.rank_a);
    s << " \u2192 ";
    rank_text(r.rank_b);
    s << "</title>";
    s << "<line x1='" << left << "' y1='" << y(r.rank_a) << "' x2='" << right << "' y2='"
      << y(r.rank_b) << "' stroke='" << colour << "' stroke-width='" << (same ? 1.2 : 2.2) << "'/>";
    s << "<circle cx='" << left << "' cy='" << y(r.rank_a) << "' r='3' fill='" << colour << "'/>";
    s << "<circle cx='" << right << "' cy='" << y(r.rank_b) << "' r='3' fill='" << colour << "'/>";
    if (r.rank_a) {
      s << "<text x='" << left - 8 << "' y='" << y(r.rank_a) + 4 << "' text-anchor='end'>"
        << r.rank_a << ". " << html_escape(r.reef_id) << "</text>";
    }
    if (r.rank_b) {
      s << "<text x='" << right + 8 << "' y='" << y(r.rank_b) + 4 << "'>" << r.rank_b << ". "
        << html_escape(r.reef_id) << "</text>";
    }
    s << "</g>\n";
  }
  s << "</svg>";
  return s.str();
}

std::string render_comparison_section(const compare::RunComparison& c,
                                      const ComparisonLabels& labels) {
  std::ostringstream s;
  const std::string a = html_escape(labels.name_a), b = html_escape(labels.name_b);
  s << "<section class='comparison'><h2>" << html_escape(labels.heading) << "</h2>\n";
  s << "<p class='sub'>" << a << " = <span class='mono'>" << html_escape(c.dir_a.string())
    << "</span>; " << b << " = <span class='mono'>" << html_escape(c.dir_b.string())
    << "</span></p>\n";
  s << "<div class='keys'>";
  s << "<div class='key'><b>" << c.links_significant << " / " << c.links_tested
    << "</b><span>links that differ beyond sampling noise at the " << html_sig(100 * c.alpha)
    << " % level (about " << html_fixed(c.expected_false_positives, 1) << " expected by chance alone); "
    << c.links_significant_fdr << " after the false discovery rate adjustment</span></div>";
  s << "<div class='key'><b>" << c.roles_changed
    << "</b><span>reefs changed role (source, sink, "
       "exchange, isolated)</span></div>";
  if (c.plans) {
    s << "<div class='key'><b>"
      << (std::isnan(c.tau.tau) ? std::string("&ndash;") : html_fixed(c.tau.tau, 2))
      << "</b><span>Kendall's tau-b between the two cull rankings (1 = same order)</span></div>";
    s << "<div class='key'><b>" << html_fixed(c.averted_pct_a, 1) << " \u2192 "
      << html_fixed(c.averted_pct_b, 1)
      << " %</b><span>recruitment on priority reefs averted by the plan ("
      << html_signed_fixed(c.averted_pct_b - c.averted_pct_a, 1) << " points)</span></div>";
  }
  s << "</div>\n";
  if (c.identical()) s << "<p>No difference: every link count, role and rank is the same.</p>\n";

  if (c.plans) {
    s << "<h3>Cull ranking</h3>";
    if (!c.entered.empty() || !c.left.empty()) {
      s << "<p>";
      if (!c.entered.empty()) {
        s << "Entering the recommended set: ";
        for (std::size_t i = 0; i < c.entered.size(); ++i)
          s << (i ? ", " : "") << "<b>" << html_escape(c.entered[i]) << "</b>";
        s << ". ";
      }
      if (!c.left.empty()) {
        s << "Leaving it: ";
        for (std::size_t i = 0; i < c.left.size(); ++i)
          s << (i ? ", " : "") << "<b>" << html_escape(c.left[i]) << "</b>";
        s << ".";
      }
      s << "</p>\n";
    } else {
      s << "<p>The same reefs are recommended in both.</p>\n";
    }
    s << "<figure>" << svg_rank_slope(c, labels)
      << "<figcaption>Rank of each recommended cull site in " << a << " (left) and " << b
      << " (right). Blue: moved up or entered the plan; rust: moved down or left it; grey: same "
         "rank."
      << "</figcaption></figure>\n";
  }

  s << "<h3>Links that changed most</h3>\n";
  int shown = 0;
  s << "<table><thead><tr><th>from</th><th>to</th><th>P in " << a << "</th><th>P in " << b
    << "</th><th>change</th><th>settling particles</th><th>p-value</th><th>beyond "
       "noise?</th></tr></thead><tbody>\n";
  for (const auto& l : c.links) {
    if (shown >= labels.max_links) break;
    if (!l.significant) continue;
    ++shown;
    s << "<tr><td class='mono'>" << html_escape(l.source_id) << "</td><td class='mono'>"
      << html_escape(l.sink_id) << "</td><td class='n'>" << html_sig(l.probability_a)
      << "</td><td class='n'>" << html_sig(l.probability_b) << "</td><td class='n'>"
      << html_sig(l.difference()) << "</td><td class='n'>" << l.settlers_a << " / " << l.released_a
      << " \u2192 " << l.settlers_b << " / " << l.released_b << "</td><td class='n'>"
      << html_sig(l.test.p_value, 2) << "</td><td>"
      << (l.significant_fdr ? "yes (also after FDR)" : "yes")
      << (l.test.min_expected < 5 ? " <span class='warn'>few particles</span>" : "")
      << "</td></tr>\n";
  }
  if (shown == 0)
    s << "<tr><td colspan='8'>No link differs beyond sampling noise at this level.</td></tr>\n";
  s << "</tbody></table>\n<p class='sub'>P = probability that a larva released on the first reef "
       "settles on "
       "the second (pooled over spawning events). The test compares the fractions of released "
       "particles that "
       "settled (two-proportion z-test, two-sided, level "
    << html_sig(c.alpha) << "); with " << c.links_tested << " links tested, about "
    << html_fixed(c.expected_false_positives, 1)
    << " would be flagged by chance alone even if nothing had changed, so single flagged links "
       "with large "
       "p-values deserve little weight. \u201cAlso after FDR\u201d: still flagged when the "
       "Benjamini\u2013"
       "Hochberg false discovery rate is held at the same level. Full table: the comparison CSV "
       "files.</p>\n";

  if (c.roles_changed > 0) {
    s << "<h3>Reefs that changed role</h3><table><thead><tr><th>reef</th><th>" << a << "</th><th>"
      << b << "</th><th>export " << a << " \u2192 " << b << "</th><th>import " << a << " \u2192 "
      << b << "</th></tr></thead><tbody>\n";
    for (const auto& r : c.reefs) {
      if (!r.role_changed()) continue;
      s << "<tr><td class='mono'>" << html_escape(r.reef_id)
        << "</td><td><span class='swatch' style='background:" << role_colour(r.role_a)
        << "'></span>" << html_escape(r.role_a.empty() ? "(absent)" : r.role_a)
        << "</td><td><span class='swatch' style='background:" << role_colour(r.role_b)
        << "'></span>" << html_escape(r.role_b.empty() ? "(absent)" : r.role_b)
        << "</td><td class='n'>" << html_sig(r.export_a) << " \u2192 " << html_sig(r.export_b)
        << "</td><td class='n'>" << html_sig(r.import_a) << " \u2192 " << html_sig(r.import_b)
        << "</td></tr>\n";
    }
    s << "</tbody></table>\n";
  }
  s << "</section>\n";
  return s.str();
}

void write_comparison_html(const std::filesystem::path& file, const compare::RunComparison& c,
                           const ComparisonLabels& labels) {
  std::ostringstream s;
  s << "<!DOCTYPE html>\n<html lang='en'>\n<head>\n<meta charset='utf-8'>\n"
    << "<meta name='viewport' content='width=device-width, initial-scale=1'>\n"
    << "<meta http-equiv='Content-Security-Policy' content=\"default-src 'none'; style-src "
       "'unsafe-inline'; img-src data:\">\n"
    << "<title>" << html_escape(labels.heading) << " \u2014 cullcast</title>\n<style>"
    << briefing_css() << "</style>\n</head>\n<body>\n<main>\n<header class='top'><h1>"
    << html_escape(labels.heading) << "</h1><p class='sub'>cullcast "
    << html_escape(CULLCAST_VERSION) << "</p></header>\n"
    << render_comparison_section(c, labels) << "</main>\n</body>\n</html>\n";
  write_text_atomically(file, s.str());
}

}  // namespace cullcast::report
