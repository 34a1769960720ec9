#pragma once
// Is the particle count enough? Compare a run with a rerun that releases twice
// the larvae per reef (independent random numbers), list the links and ranks
// that still move, and recommend a count for a target precision.
//
// Particles per source for a link probability p estimated to a relative
// half-width r at confidence 1 - a (normal approximation to the binomial):
//   n = z^2 (1 - p) / (r^2 p),  z = Phi^-1(1 - a/2),
// the sample size for estimating a proportion, n0 = z^2 p q / d^2, with the
// absolute margin d = r p (Cochran 1977, Sampling Techniques, 3rd ed., Wiley,
// section 4.4; from memory, section number not checked).
#include <cstdint>
#include <string>
#include <vector>

#include "cullcast/compare/run_comparison.hpp"

namespace cullcast::compare {

// Inverse of the standard normal distribution function, by bisection on erfc
// (|error| < 1e-12 for 1e-12 < q < 1 - 1e-12).
double normal_quantile(double q);

// n above, rounded up; p in (0, 1), r > 0, confidence in (0, 1).
std::int64_t particles_for_precision(double p, double relative_half_width, double confidence);

// Relative half-width z sqrt((1 - p) / (n p)) reached with n particles.
double relative_half_width(double p, std::int64_t n, double confidence);

struct ConvergenceOptions {
  double relative_precision = 0.2;  // target relative half-width of a link probability
  double probability = 1e-3;        // weakest link probability that must meet the target
  double confidence = 0.95;         // of the interval
};

struct MovingLink {
  std::string source_id, sink_id;
  double fraction_a = 0, fraction_b = 0;  // settling particles / released
  double relative_change = 0;             // |b - a| / max(a, b)
  bool significant = false;               // flagged after the Benjamini-Hochberg adjustment
};

struct RankShift {
  std::string reef_id;
  int rank_a = 0, rank_b = 0;  // 0 = not in that plan
};

struct ConvergenceReport {
  int links_considered = 0;        // fraction >= probability in either run
  std::vector<MovingLink> moving;  // of those, relative change > relative_precision; largest first
  std::vector<RankShift> rank_shifts;
  std::int64_t particles_needed = 0;  // per source, all events together
  std::int64_t particles_b = 0;       // per source in the larger run (largest over sources)
  double precision_b = 0;             // relative half-width at `probability` with particles_b
};

// `c` compares the run (A) with its rerun at twice the larvae (B).
ConvergenceReport assess_convergence(const RunComparison& c, const ConvergenceOptions& options);

}  // namespace cullcast::compare
