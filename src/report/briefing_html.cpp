// The briefing page: inline CSS (screen and print) and the SVG figures; no
// script, no external resource, every input string escaped.
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <sstream>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/report/briefing.hpp"
#include "html_numbers.hpp"

namespace cullcast::report {
namespace {



constexpr const char* kCss = R"CSS(
:root { --ink:#1c2329; --muted:#5a6670; --rule:#d5dbe0; --accent:#2f6fae; }
* { box-sizing: border-box; }
body { margin:0; color:var(--ink); background:#fbfbf9; font: 15px/1.5 "DejaVu Sans", Helvetica, Arial, sans-serif; }
main { max-width: 1000px; margin: 0 auto; padding: 24px 28px 60px; }
header.top { border-bottom: 3px solid var(--ink); margin-bottom: 18px; }
h1 { font-size: 26px; margin: 0 0 4px; }
h2 { font-size: 19px; margin: 34px 0 8px; border-bottom: 1px solid var(--rule); padding-bottom: 3px; }
h3 { font-size: 15px; margin: 18px 0 4px; }
.sub { color: var(--muted); margin: 0 0 10px; }
.caution { border-left: 6px solid #b2461d; background: #fff4ec; padding: 10px 14px; margin: 14px 0; }
.keys { display: flex; flex-wrap: wrap; gap: 10px; margin: 12px 0; }
.key { flex: 1 1 150px; background: #fff; border: 1px solid var(--rule); border-radius: 6px; padding: 8px 12px; }
.key b { display: block; font-size: 22px; }
.key span { color: var(--muted); font-size: 13px; }
figure { margin: 12px 0 18px; background: #fff; border: 1px solid var(--rule); border-radius: 6px; padding: 10px; break-inside: avoid; page-break-inside: avoid; }
figure svg { max-width: 100%; height: auto; display: block; margin: 0 auto; }
figcaption { color: var(--muted); font-size: 13px; margin-top: 6px; }
table { border-collapse: collapse; width: 100%; font-size: 13px; background: #fff; }
th, td { border-bottom: 1px solid var(--rule); padding: 4px 6px; text-align: left; vertical-align: top; }
th { background: #eef2f5; }
td.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tr { break-inside: avoid; page-break-inside: avoid; }
.swatch { display: inline-block; width: 11px; height: 11px; border: 1px solid #555; margin-right: 5px; vertical-align: -1px; }
pre { background: #fff; border: 1px solid var(--rule); padding: 10px; font-size: 12px; overflow-x: auto; white-space: pre-wrap; word-break: break-word; }
code, .mono { font-family: "DejaVu Sans Mono", monospace; font-size: 12px; word-break: break-all; }
.warn { color: #8a3a12; }
@media print {
  @page { margin: 14mm; }  /* no size: fits A4 and US Letter alike */
  body { background: #fff; font-size: 10.5pt; }
  main { max-width: none; padding: 0; }
  h2 { break-after: avoid; page-break-after: avoid; }
  section.page { break-before: page; page-break-before: always; }
  figure { border: none; padding: 0; }
  pre { white-space: pre-wrap; }
}
)CSS";

}  // namespace

const char* briefing_css() { return kCss; }

std::string render_briefing_html(const BriefingData& d) {
  std::ostringstream s;
  const std::size_t n = d.reefs.size();
  int roles[4] = {0, 0, 0, 0};
  const char* role_names[4] = {"source", "sink", "exchange", "isolated"};
  for (const auto& r : d.results) {
    for (int k = 0; k < 4; ++k) roles[k] += r.role == role_names[k];
  }
  int priority = 0;
  for (const auto& r : d.reefs) priority += r.priority > d.priority_threshold && r.priority > 0;
  s << "<!DOCTYPE html>\n<html lang='en'>\n<head>\n<meta charset='utf-8'>\n"
    << "<meta name='viewport' content='width=device-width, initial-scale=1'>\n"
    << "<meta http-equiv='Content-Security-Policy' content=\"default-src 'none'; style-src 'unsafe-inline'; img-src data:\">\n"
    << "<title>" << html_escape(d.title) << " \u2014 cullcast briefing</title>\n<style>" << kCss << "</style>\n</head>\n<body>\n<main>\n";
  s << "<header class='top'><h1>" << html_escape(d.title) << "</h1><p class='sub'>Briefing generated "
    << html_escape(d.generated_utc) << " by cullcast " << html_escape(d.version) << " \u00b7 seed " << d.seed
    << "</p></header>\n";
  s << d.opening_html;
  if (!d.description.empty()) s << "<p>" << html_escape(d.description) << "</p>\n";
  s << "<div class='caution'><b>Caution.</b> These outputs are decision support with stated uncertainty, "
       "not a prediction of where starfish will be. Field work follows local dive-safety codes, permits and "
       "licensed practice.</div>\n";
  s << "<div class='keys'>"
    << "<div class='key'><b>" << n << "</b><span>reefs (" << priority << " priority)</span></div>"
    << "<div class='key'><b>" << d.event_labels.size() << "</b><span>spawning events simulated</span></div>"
    << "<div class='key'><b>" << roles[0] << " / " << roles[1] << "</b><span>source / sink reefs</span></div>";
  if (d.cull_present && !d.ranking.empty()) {
    double effort = 0;
    for (const auto& c : d.ranking) effort += c.effort_days;
    s << "<div class='key'><b>" << html_fixed(d.ranking.back().cumulative_pct, 1) << " %</b><span>of recruitment on priority "
      << "reefs averted by the plan (" << d.ranking.size() << " sites, " << html_sig(effort) << " vessel-days culling)</span></div>";
  }
  s << "</div>\n";
  for (const auto& w : d.warnings) s << "<p class='warn'>\u26a0 " << html_escape(w) << "</p>\n";

  s << "<h2>1. Reefs, larval links and where to cull</h2>\n<figure>" << svg_role_map(d)
    << "<figcaption>Reefs coloured by their role in the larval network (source: exports at least twice what it "
       "imports; sink: the reverse; exchange: in between). Arrows: the "
    << std::min<std::size_t>(d.links.size(), static_cast<std::size_t>(std::max(0, d.max_links)))
    << " strongest reef-to-reef links, mean over spawning events, width proportional to the probability that a "
       "larva released on one reef settles on the other. Stars: priority reefs. Numbered circles: recommended "
       "cull sites in rank order. Land from the currents' mask (model cells, not a surveyed coastline)."
    << "</figcaption></figure>\n";

  s << "<section class='page'><h2>2. Recommended cull plan</h2>\n";
  if (!d.cull_present) {
    s << "<p>The scenario has no <code>[cull]</code> section: no cull plan was computed.</p>\n";
  } else if (d.ranking.empty()) {
    s << "<p>The cull stage recommended no site (no budget, or no reef's larvae reach a priority reef).</p>\n";
  } else {
    s << "<table><thead><tr><th>#</th><th>reef</th><th>effort<br>(vessel-days)</th><th>averted<br>(% of priority-reef "
         "recruitment)</th><th>cumulative (%)</th><th>in best plan of events</th><th>why</th></tr></thead><tbody>\n";
    for (const auto& c : d.ranking) {
      const std::string name = c.reef >= 0 ? d.reefs[c.reef].name : c.reef_id;
      s << "<tr><td class='n'>" << c.rank << "</td><td>" << html_escape(name) << "<br><span class='mono'>"
        << html_escape(c.reef_id) << "</span></td><td class='n'>" << html_sig(c.effort_days) << "</td><td class='n'>"
        << html_fixed(c.averted_pct, 1) << "</td><td class='n'>" << html_fixed(c.cumulative_pct, 1) << "</td><td class='n'>"
        << html_fixed(100 * c.in_best_share, 0) << " %" << (c.one_night ? "<br><span class='warn'>depends on one night</span>" : "")
        << "</td><td>" << html_escape(c.explanation) << "</td></tr>\n";
    }
    s << "</tbody></table>\n";
    s << "<figure>" << svg_budget_curve(d)
      << "<figcaption>Recruitment on priority reefs averted by the best plan found at each budget. The curve "
         "flattens where extra vessel-days buy little: that is where the budget stops paying.</figcaption></figure>\n";
    s << "<figure>" << svg_robustness(d)
      << "<figcaption>How much each recommended site contributes across the simulated spawning events: bar = "
         "mean over events, whisker = down to the worst 10 % of events (10 % quantile). A short whisker means the "
         "site is useful whatever night the starfish spawn; ochre bars and \u26a0 mark a site whose value comes "
         "mostly from one night. Right: share of events whose own best plan includes the site.</figcaption></figure>\n";
  }
  s << "</section>\n";

  s << "<section class='page'><h2>3. Connectivity</h2>\n<figure>" << svg_matrix(d)
    << "<figcaption>Probability that a larva released on the row's reef settles on the column's reef (mean over "
       "events; log colour scale; white = no larva seen, which with few particles is not proof of no link). Reefs "
       "ordered by position along the region, so neighbours sit together and the diagonal band is local "
       "exchange.</figcaption></figure>\n";
  s << "<figure>" << svg_settlement_map(d)
    << "<figcaption>Where larvae end up: each reef's share of all larvae released in the region that settle on "
       "it (mean over events).</figcaption></figure></section>\n";

  s << "<section class='page'><h2>4. Reefs by role</h2>\n<table><thead><tr><th>reef</th><th>role</th><th>priority</th>"
       "<th>larval output</th><th>local retention</th><th>self-recruitment</th><th>export</th><th>import</th>"
       "<th>settling here (% of released)</th></tr></thead><tbody>\n";
  std::vector<int> order(n);
  for (std::size_t i = 0; i < n; ++i) order[i] = static_cast<int>(i);
  auto role_rank = [&](int i) {
    const std::string r = i < static_cast<int>(d.results.size()) ? d.results[i].role : "";
    for (int k = 0; k < 4; ++k) {
      if (r == role_names[k]) return k;
    }
    return 4;
  };
  std::stable_sort(order.begin(), order.end(), [&](int a, int b) {
    if (role_rank(a) != role_rank(b)) return role_rank(a) < role_rank(b);
    return d.results[a].export_strength - d.results[a].import_strength >
           d.results[b].export_strength - d.results[b].import_strength;
  });
  for (int i : order) {
    const auto& r = d.reefs[i];
    const ReefResult q = i < static_cast<int>(d.results.size()) ? d.results[i] : ReefResult{};
    s << "<tr><td>" << html_escape(r.name) << "<br><span class='mono'>" << html_escape(r.id) << "</span></td><td>"
      << "<span class='swatch' style='background:" << role_colour(q.role) << "'></span>" << html_escape(q.role)
      << "</td><td class='n'>" << html_sig(r.priority) << "</td><td class='n'>" << html_sig(q.larval_output)
      << "</td><td class='n'>" << html_sig(q.local_retention) << "</td><td class='n'>" << html_sig(q.self_recruitment)
      << "</td><td class='n'>" << html_sig(q.export_strength) << "</td><td class='n'>" << html_sig(q.import_strength)
      << "</td><td class='n'>" << html_sig(100 * q.settle_probability) << "</td></tr>\n";
  }
  s << "</tbody></table>\n<p class='sub'>Larval output in units of surveyed adults (equal outputs when none were "
       "surveyed); export/import in the same units. Definitions: docs/methods.md and docs/briefing.md.</p></section>\n";

  s << "<section class='page'><h2>5. Reading the uncertainty</h2>\n<ul>"
       "<li>Every probability is estimated from a finite number of simulated larvae per reef and event; a link "
       "never seen can still exist below the resolution (see the connectivity outputs for Wilson intervals).</li>"
       "<li>Spawning nights differ: the plan is judged across all simulated events; whiskers and the "
       "\u201cin best plan of\u201d share show how much a site depends on which night the starfish spawn.</li>"
       "<li>Larval biology (timing, mortality, fecundity) and cull efficiency are assumptions stated in the "
       "scenario below; results inherit their uncertainty. Currents are model output, not observations.</li></ul>\n";
  s << "<h2>6. Provenance</h2>\n<table><thead><tr><th>input</th><th>file</th><th>bytes</th><th>SHA-256</th></tr></thead><tbody>\n";
  for (const auto& f : d.inputs) {
    s << "<tr><td>" << html_escape(f.role) << "</td><td class='mono'>" << html_escape(f.path.string())
      << "</td><td class='n'>" << f.bytes << "</td><td class='mono'>" << html_escape(f.sha256) << "</td></tr>\n";
  }
  s << "</tbody></table>\n<h3>Spawning events</h3><ul>";
  for (const auto& e : d.event_labels) s << "<li>" << html_escape(e) << "</li>";
  s << "</ul>\n<h3>Settings in effect</h3><ul>";
  s << "<li>seed = " << d.seed << "</li><li>cullcast " << html_escape(d.version) << "</li>";
  for (const auto& x : d.settings) s << "<li><code>" << html_escape(x) << "</code></li>";
  for (const auto& o : d.overrides) s << "<li>override <code>--set " << html_escape(o) << "</code></li>";
  s << "</ul>\n<h3>The scenario file</h3><pre>" << html_escape(d.scenario_text) << "</pre>\n</section>\n";
  s << "</main>\n</body>\n</html>\n";
  return s.str();
}

void write_briefing_html(const std::filesystem::path& file, const BriefingData& d) {
  const std::string text = render_briefing_html(d);
  AtomicFile out(file);
  out.stream() << text;
  out.commit();
}

}  // namespace cullcast::report
