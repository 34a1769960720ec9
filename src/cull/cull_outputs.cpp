// Cull CSV outputs; formats in docs/formats.md.
#include "cullcast/cull/cull_outputs.hpp"

#include <cstdio>
#include <ostream>
#include <string>

#include "cullcast/base/atomic_file.hpp"

namespace cullcast::cull {
namespace {

std::string g(double v) {
  char b[48];
  std::snprintf(b, sizeof b, "%.6g", v);
  return b;
}

// RFC 4180 quoting: fields with commas, quotes or newlines are quoted, quotes doubled.
std::string quoted(const std::string& s) {
  if (s.find_first_of(",\"\n\r") == std::string::npos) return s;
  std::string out = "\"";
  for (char c : s) {
    if (c == '"') out += '"';
    out += c;
  }
  return out + "\"";
}

}  // namespace

void write_cull_ranking_csv(const std::filesystem::path& file, const Robustness& r,
                            const std::vector<Explanation>& explanations) {
  AtomicFile f(file);
  auto& o = f.stream();
  o << "rank,reef_id,effort,recruits_averted,recruits_averted_pct,cumulative_pct,removed_fraction,"
       "adults,gain_per_vessel_day,averted_member_mean,averted_member_p10,in_best_plan_share,"
       "top_event_share,top_event,depends_on_one_night,explanation\n";
  for (std::size_t k = 0; k < r.ranking.size(); ++k) {
    const auto& x = r.ranking[k];
    o << x.rank << ',' << quoted(x.reef_id) << ',' << g(x.effort_days) << ',' << g(x.averted) << ','
      << g(x.averted_pct) << ',' << g(x.cumulative_pct) << ',' << g(x.removed_fraction) << ','
      << g(x.adults) << ',' << g(x.gain_per_day) << ',' << g(x.member_mean) << ',' << g(x.member_p10)
      << ',' << g(x.in_best_share) << ',' << g(x.top_member_share) << ',' << quoted(x.top_member) << ','
      << (x.one_night ? "true" : "false") << ','
      << quoted(k < explanations.size() ? explanations[k].text : std::string()) << '\n';
  }
  f.commit();
}

void write_cull_curve_csv(const std::filesystem::path& file, const std::vector<CurvePoint>& curve) {
  AtomicFile f(file);
  auto& o = f.stream();
  o << "budget_vessel_days,recruits_averted,recruits_averted_pct,cost_vessel_days,"
       "marginal_per_vessel_day,reefs,method\n";
  for (const auto& c : curve) {
    o << g(c.budget_days) << ',' << g(c.averted) << ',' << g(c.averted_pct) << ',' << g(c.cost_days) << ','
      << g(c.marginal_per_day) << ',' << c.reefs << ',' << c.method << '\n';
  }
  f.commit();
}

}  // namespace cullcast::cull
