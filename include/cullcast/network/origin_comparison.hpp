#pragma once
// Two answers to "where did the larvae settling on this reef come from?",
// side by side: the connectivity matrix's Bayes attribution
// (source_attribution.hpp) and the backward drift's origin density
// (backward_origins.csv of the drift stage). They answer slightly different
// questions (the matrix: released larvae of the modelled spawning nights; the
// backward run: any spawning time, adjoint diffusion), so agreement is a
// check on both, not an identity. Summary measures: the total variation
// distance ½·Σ|p_i − q_i| (0 = same shares, 1 = disjoint) and how many of the
// top five origins both name.
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/network/source_attribution.hpp"

namespace cullcast::network {

struct BackwardOrigin {
  std::string reef_id;
  double share = 0;  // of the backward origin weight, sums to 1
};

// Reads backward_origins.csv (docs/formats.md); InputError naming the file
// and line when malformed.
std::vector<BackwardOrigin> read_backward_origins(const std::filesystem::path& path);

struct OriginPair {
  std::string origin_id;
  double matrix_share = 0;                 // 0 when the matrix has no larvae from it
  double matrix_event_min = 0, matrix_event_max = 0;
  double backward_share = 0;               // 0 when the backward run found none
};

struct OriginComparison {
  std::string sink_id;
  std::vector<OriginPair> origins;  // union of both lists, by the larger share, largest first
  double total_variation = 0;       // ½·Σ|matrix − backward|
  int top5_shared = 0;              // origins in both top-five lists
};

OriginComparison compare_origins(const Connectivity& c, const Attribution& matrix,
                                 const std::vector<BackwardOrigin>& backward);

// origins_compared.csv: sink_reef_id, origin_id, matrix_share, matrix_event_min,
// matrix_event_max, backward_share; then '#' lines with the summary measures.
void write_origin_comparison_csv(const std::filesystem::path& path, const OriginComparison& comparison);

}  // namespace cullcast::network
