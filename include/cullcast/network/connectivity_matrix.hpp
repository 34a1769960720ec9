#pragma once
// CONTRACT. Connectivity matrices built from the drift stage's settlement
// records, one per spawning event, sparse throughout.
//
// ORIENTATION (everywhere in this module): row i = SOURCE (where larvae were
// released), column j = SINK (reef they settled on).
//   count(i,j)       particles from source i that settled on reef j
//   settled(i,j)     larvae those particles represent (sum of record weights;
//                    equals count unless mortality acts on weights)
//   probability(i,j) P_ij = settled(i,j) / released_i
// Each row of P sums to at most 1 (the rest died, stranded, left or drifted).
//
// Sources are the settlement file's sources (reefs, then aggregations); sinks
// are its reefs. The square reef-to-reef matrix keeps the reef sources only.
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include <Eigen/SparseCore>

#include "cullcast/drift/settlement_log.hpp"

namespace cullcast::network {

using SparseMatrix = Eigen::SparseMatrix<double, Eigen::RowMajor>;

struct EventMatrices {
  SparseMatrix count;        // particles, sources x sinks
  SparseMatrix settled;      // larvae represented, sources x sinks
  SparseMatrix probability;  // dimensionless, sources x sinks
  std::vector<std::int64_t> released;  // particles released per source
};

struct Connectivity {
  std::vector<std::string> source_ids;
  std::vector<std::uint8_t> source_kinds;   // 0 reef, 1 aggregation
  std::vector<std::int32_t> source_reefs;   // reef (sink) index of each source, or -1
  std::vector<std::string> sink_ids;        // reef ids
  std::vector<std::string> event_labels;
  std::vector<EventMatrices> events;

  std::size_t sources() const { return source_ids.size(); }
  std::size_t sinks() const { return sink_ids.size(); }
};

// Builds the per-event matrices. `file` names the settlement file in messages.
// Throws InputError when a record points outside the tables, or a source has
// more settlers than it released.
Connectivity build_connectivity(const drift::SettlementData& data,
                                const std::filesystem::path& file);

// Realised matrix: row i of P scaled by the larval output L_i of source i,
// R = diag(L) P, so R_ij is the expected number of larvae (in L's units) from
// i settling on j. L has one entry per row of P. The network module does not
// compute L: the caller supplies it (surveyed adults for now).
SparseMatrix realised_matrix(const SparseMatrix& probability, const std::vector<double>& output);

// Reef-to-reef probability matrix (reefs x reefs) of one event: row r pools
// every reef-kind source lying on reef r (settled and released summed).
// Reefs without a reef source have an empty row.
SparseMatrix reef_probability(const Connectivity& c, std::size_t event);

// Per-reef larval output from per-source output: the reef sources' values.
std::vector<double> reef_output(const Connectivity& c, const std::vector<double>& source_output);

// Sum of each row (settlement success of each source).
std::vector<double> row_sums(const SparseMatrix& m);

}  // namespace cullcast::network
