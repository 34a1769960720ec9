#include "cullcast/compare/run_comparison.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <map>
#include <set>
#include <sstream>

#include "cullcast/base/atomic_file.hpp"

namespace cullcast::compare {
namespace fs = std::filesystem;
namespace {

std::string num(double v) {
  if (std::isnan(v)) return "";
  char buffer[32];
  const auto r = std::to_chars(buffer, buffer + sizeof buffer, v);
  return std::string(buffer, r.ptr);
}

std::string csv_field(const std::string& s) {
  if (s.find_first_of(",\"\n\r") == std::string::npos) return s;
  std::string q = "\"";
  for (char c : s) q += c == '"' ? std::string("\"\"") : std::string(1, c);
  return q + "\"";
}

std::string fmt(const char* format, double v) {
  char b[64];
  std::snprintf(b, sizeof b, format, v);
  return b;
}

}  // namespace

bool RunComparison::identical() const {
  for (const auto& l : links) {
    if (l.settlers_a != l.settlers_b || l.released_a != l.released_b ||
        l.probability_a != l.probability_b) {
      return false;
    }
  }
  for (const auto& r : reefs) {
    if (r.role_changed() || r.rank_a != r.rank_b) return false;
  }
  return averted_pct_a == averted_pct_b;
}

void rank_vectors(const RunOutputs& a, const RunOutputs& b, std::vector<std::string>& reefs,
                  std::vector<double>& rank_a, std::vector<double>& rank_b) {
  std::map<std::string, int> ra, rb;
  for (const auto& p : a.plan) ra[p.reef_id] = p.rank;
  for (const auto& p : b.plan) rb[p.reef_id] = p.rank;
  reefs.clear();
  rank_a.clear();
  rank_b.clear();
  std::set<std::string> seen;
  auto add = [&](const std::string& id) {
    if (!seen.insert(id).second) return;
    reefs.push_back(id);
    const auto ia = ra.find(id), ib = rb.find(id);
    rank_a.push_back(ia != ra.end() ? ia->second : static_cast<double>(a.plan.size() + 1));
    rank_b.push_back(ib != rb.end() ? ib->second : static_cast<double>(b.plan.size() + 1));
  };
  for (const auto& p : a.plan) add(p.reef_id);
  for (const auto& p : b.plan) add(p.reef_id);
}

RunComparison compare_runs(const RunOutputs& a, const RunOutputs& b,
                           const CompareOptions& options) {
  RunComparison c;
  c.dir_a = a.dir;
  c.dir_b = b.dir;
  c.alpha = options.alpha;

  // Links: union of both runs' links; a link absent from a run settled no particle there.
  std::map<std::pair<std::string, std::string>, LinkChange> links;
  for (const auto& l : a.links) {
    LinkChange& x = links[{l.source_id, l.sink_id}];
    x.source_id = l.source_id;
    x.sink_id = l.sink_id;
    x.released_a = l.released;
    x.settlers_a = l.settlers;
    x.probability_a = l.probability;
  }
  for (const auto& l : b.links) {
    LinkChange& x = links[{l.source_id, l.sink_id}];
    x.source_id = l.source_id;
    x.sink_id = l.sink_id;
    x.released_b = l.released;
    x.settlers_b = l.settlers;
    x.probability_b = l.probability;
  }
  std::vector<double> p_values;
  std::vector<LinkChange*> tested;
  for (auto& [key, x] : links) {
    if (x.released_a < 0) x.released_a = a.released_by(x.source_id);
    if (x.released_b < 0) x.released_b = b.released_by(x.source_id);
    if (x.released_a > 0 && x.released_b > 0) {
      x.test = two_proportion_z(x.settlers_a, x.released_a, x.settlers_b, x.released_b);
    }
    if (x.test.testable) {
      p_values.push_back(x.test.p_value);
      tested.push_back(&x);
    }
    c.links.push_back(x);
  }
  const std::vector<double> q = benjamini_hochberg(p_values);
  std::map<std::pair<std::string, std::string>, double> q_by_link;
  for (std::size_t i = 0; i < tested.size(); ++i)
    q_by_link[{tested[i]->source_id, tested[i]->sink_id}] = q[i];
  for (auto& x : c.links) {
    const auto it = q_by_link.find({x.source_id, x.sink_id});
    if (it != q_by_link.end()) x.q_value = it->second;
    x.significant = x.test.testable && x.test.p_value < c.alpha;
    x.significant_fdr = x.test.testable && x.q_value < c.alpha;
    c.links_tested += x.test.testable;
    c.links_significant += x.significant;
    c.links_significant_fdr += x.significant_fdr;
  }
  c.expected_false_positives = c.alpha * c.links_tested;
  std::stable_sort(c.links.begin(), c.links.end(), [](const LinkChange& x, const LinkChange& y) {
    if (x.test.p_value != y.test.p_value) return x.test.p_value < y.test.p_value;
    return std::fabs(x.difference()) > std::fabs(y.difference());
  });

  // Reefs: roles and ranks.
  std::map<std::string, std::size_t> index;
  auto reef = [&](const std::string& id) -> ReefChange& {
    auto it = index.find(id);
    if (it == index.end()) {
      it = index.emplace(id, c.reefs.size()).first;
      c.reefs.push_back(ReefChange{});
      c.reefs.back().reef_id = id;
    }
    return c.reefs[it->second];
  };
  for (const auto& r : a.reefs) {
    ReefChange& x = reef(r.reef_id);
    x.role_a = r.role;
    x.export_a = r.export_strength;
    x.import_a = r.import_strength;
  }
  for (const auto& r : b.reefs) {
    ReefChange& x = reef(r.reef_id);
    x.role_b = r.role;
    x.export_b = r.export_strength;
    x.import_b = r.import_strength;
  }
  for (const auto& p : a.plan) reef(p.reef_id).rank_a = p.rank;
  for (const auto& p : b.plan) reef(p.reef_id).rank_b = p.rank;
  for (const auto& r : c.reefs) {
    c.roles_changed += r.role_changed();
    if (r.rank_a == 0 && r.rank_b > 0) c.entered.push_back(r.reef_id);
    if (r.rank_a > 0 && r.rank_b == 0) c.left.push_back(r.reef_id);
  }

  c.plans = a.has_plan && b.has_plan;
  if (c.plans) {
    std::vector<std::string> ids;
    std::vector<double> ra, rb;
    rank_vectors(a, b, ids, ra, rb);
    c.tau = kendall_tau_b(ra, rb);
    c.tau_reefs = static_cast<int>(ids.size());
    c.averted_pct_a = a.plan_averted_pct;
    c.averted_pct_b = b.plan_averted_pct;
    c.averted_a = a.curve_averted;
    c.averted_b = b.curve_averted;
  }
  return c;
}

std::vector<fs::path> write_comparison_csv(const fs::path& dir, const std::string& prefix,
                                           const RunComparison& c) {
  fs::create_directories(dir);
  std::vector<fs::path> written;
  // One CSV file dir/<prefix><suffix>, written whole by `rows` or not at all.
  auto write = [&](const std::string& suffix, const auto& rows) {
    AtomicFile file(dir / (prefix + suffix));
    rows(file.stream());
    file.commit();
    written.push_back(file.target());
  };
  write("_links.csv", [&](std::ostream& out) {
    out << "source_id,sink_id,released_a,settlers_a,probability_a,released_b,settlers_b,"
           "probability_b,difference,z,p_value,q_value,min_expected,significant,significant_fdr\n";
    for (const auto& l : c.links) {
      out << csv_field(l.source_id) << ',' << csv_field(l.sink_id) << ','
          << (l.released_a >= 0 ? std::to_string(l.released_a) : "") << ',' << l.settlers_a << ','
          << num(l.probability_a) << ',' << (l.released_b >= 0 ? std::to_string(l.released_b) : "")
          << ',' << l.settlers_b << ',' << num(l.probability_b) << ',' << num(l.difference()) << ','
          << (l.test.testable ? num(l.test.z) : "") << ','
          << (l.test.testable ? num(l.test.p_value) : "") << ','
          << (l.test.testable ? num(l.q_value) : "") << ',' << num(l.test.min_expected) << ','
          << (l.significant ? "true" : "false") << ',' << (l.significant_fdr ? "true" : "false")
          << "\n";
    }
  });
  write("_reefs.csv", [&](std::ostream& out) {
    out << "reef_id,role_a,role_b,role_changed,export_a,export_b,import_a,import_b,rank_a,rank_b,"
           "rank_shift,plan\n";
    for (const auto& r : c.reefs) {
      const char* plan =
          r.rank_a == 0 ? (r.rank_b == 0 ? "" : "entered") : (r.rank_b == 0 ? "left" : "kept");
      out << csv_field(r.reef_id) << ',' << r.role_a << ',' << r.role_b << ','
          << (r.role_changed() ? "true" : "false") << ',' << num(r.export_a) << ','
          << num(r.export_b) << ',' << num(r.import_a) << ',' << num(r.import_b) << ','
          << (r.rank_a ? std::to_string(r.rank_a) : "") << ','
          << (r.rank_b ? std::to_string(r.rank_b) : "") << ','
          << (r.rank_a && r.rank_b ? std::to_string(r.rank_b - r.rank_a) : "") << ',' << plan
          << "\n";
    }
  });
  write("_summary.csv", [&](std::ostream& out) {
    out << "quantity,value\n"
        << "run_a," << csv_field(c.dir_a.string()) << "\n"
        << "run_b," << csv_field(c.dir_b.string()) << "\n"
        << "alpha," << num(c.alpha) << "\n"
        << "links," << c.links.size() << "\n"
        << "links_tested," << c.links_tested << "\n"
        << "links_significant," << c.links_significant << "\n"
        << "expected_false_positives," << num(c.expected_false_positives) << "\n"
        << "links_significant_fdr," << c.links_significant_fdr << "\n"
        << "roles_changed," << c.roles_changed << "\n";
    if (c.plans) {
      std::string entered, left;
      for (const auto& e : c.entered) entered += (entered.empty() ? "" : " ") + e;
      for (const auto& e : c.left) left += (left.empty() ? "" : " ") + e;
      out << "kendall_tau_b," << num(c.tau.tau) << "\n"
          << "tau_reefs," << c.tau_reefs << "\n"
          << "entered_plan," << csv_field(entered) << "\n"
          << "left_plan," << csv_field(left) << "\n"
          << "averted_pct_a," << num(c.averted_pct_a) << "\n"
          << "averted_pct_b," << num(c.averted_pct_b) << "\n"
          << "averted_a," << num(c.averted_a) << "\n"
          << "averted_b," << num(c.averted_b) << "\n";
    }
  });
  return written;
}

std::string comparison_summary(const RunComparison& c) {
  std::ostringstream s;
  s << "  Links: " << c.links.size() << " in either run, " << c.links_tested << " testable; "
    << c.links_significant << " differ at the " << fmt("%g", 100 * c.alpha) << " % level (about "
    << fmt("%.1f", c.expected_false_positives) << " expected by chance alone if nothing changed), "
    << c.links_significant_fdr << " after the Benjamini-Hochberg false discovery rate adjustment\n";
  s << "  Reef roles: " << c.roles_changed << " of " << c.reefs.size() << " changed\n";
  if (c.plans) {
    s << "  Cull plan: Kendall's tau-b "
      << (std::isnan(c.tau.tau) ? std::string("n/a") : fmt("%.3f", c.tau.tau)) << " over "
      << c.tau_reefs << " reefs; " << c.entered.size() << " entered, " << c.left.size()
      << " left; recruitment averted " << fmt("%.1f", c.averted_pct_a) << " % -> "
      << fmt("%.1f", c.averted_pct_b) << " %\n";
  } else {
    s << "  Cull plan: not in both runs (no [cull] section in one of them)\n";
  }
  return s.str();
}

}  // namespace cullcast::compare
