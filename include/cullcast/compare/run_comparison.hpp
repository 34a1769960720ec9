#pragma once
// Side-by-side comparison of two runs (A = before/baseline, B = after/variant):
// per-link differences with a significance flag from the particle counts,
// reef role changes, cull ranking changes (rank shifts, Kendall's tau-b, reefs
// entering or leaving the plan) and the change in recruitment averted.
// Methods and caveats: docs/sensitivity.md; file formats: docs/formats.md.
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/compare/proportion_test.hpp"
#include "cullcast/compare/rank_correlation.hpp"
#include "cullcast/compare/run_outputs.hpp"

namespace cullcast::compare {

struct CompareOptions {
  double alpha = 0.05;  // significance level of each per-link test (two-sided)
};

struct LinkChange {
  std::string source_id, sink_id;
  std::int64_t released_a = -1, settlers_a = 0;  // -1 = count unknown in that run
  std::int64_t released_b = -1, settlers_b = 0;
  double probability_a = 0, probability_b = 0;  // weighted settle probability per larva
  ProportionTest test;                          // on settlers / released
  double q_value = 1;                           // Benjamini-Hochberg over the tested links
  bool significant = false;                     // test.p_value < alpha
  bool significant_fdr = false;                 // q_value < alpha
  double difference() const { return probability_b - probability_a; }
};

struct ReefChange {
  std::string reef_id;
  std::string role_a, role_b;  // "" when the reef is missing from that run
  double export_a = 0, export_b = 0, import_a = 0, import_b = 0;
  int rank_a = 0, rank_b = 0;  // 0 = not in that run's plan
  bool role_changed() const { return role_a != role_b; }
};

struct RunComparison {
  std::filesystem::path dir_a, dir_b;
  double alpha = 0.05;
  std::vector<LinkChange> links;  // union of links, sorted by p-value then ids
  int links_tested = 0;
  int links_significant = 0;            // at alpha, per link
  int links_significant_fdr = 0;        // Benjamini-Hochberg at alpha
  double expected_false_positives = 0;  // alpha * links_tested, if nothing changed
  std::vector<ReefChange> reefs;        // union of reefs, order of run A then new ones
  int roles_changed = 0;
  bool plans = false;  // both runs have a cull plan
  TauB tau;            // over reefs in either plan (see rank_vectors)
  int tau_reefs = 0;
  std::vector<std::string> entered, left;       // reefs entering / leaving the plan (B vs A)
  double averted_pct_a = 0, averted_pct_b = 0;  // plan total, % of priority-reef recruitment
  double averted_a = 0, averted_b = 0;          // weighted larvae at the full budget
  bool identical() const;                       // no link difference, no role or rank change
};

// Ranks over the reefs in either plan; a reef outside a plan gets rank
// (that plan's size + 1), tied with the other reefs outside it.
void rank_vectors(const RunOutputs& a, const RunOutputs& b, std::vector<std::string>& reefs,
                  std::vector<double>& rank_a, std::vector<double>& rank_b);

RunComparison compare_runs(const RunOutputs& a, const RunOutputs& b,
                           const CompareOptions& options = {});

// Writes <dir>/<prefix>_links.csv, <prefix>_reefs.csv and <prefix>_summary.csv
// atomically (docs/formats.md); returns the paths.
std::vector<std::filesystem::path> write_comparison_csv(const std::filesystem::path& dir,
                                                        const std::string& prefix,
                                                        const RunComparison& c);

// A few lines for the terminal, each indented by two blanks.
std::string comparison_summary(const RunComparison& c);

}  // namespace cullcast::compare
