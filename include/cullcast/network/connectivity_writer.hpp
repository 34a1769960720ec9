#pragma once
// Writes the connectivity stage's tables, atomically (docs/formats.md):
//   connectivity.csv  long form, one row per (event, source, sink) link and
//                     one "all" row per link for the ensemble;
//   connectivity.nc   NetCDF-4 matrices, dimensions (event, source, sink),
//                     row = source, column = sink, zero-heavy and compressed;
//   reef_metrics.csv  one row per reef;
//   attribution.csv   one row per (sink asked for, origin).
#include <filesystem>
#include <string>
#include <utility>
#include <vector>

#include "cullcast/network/connectivity_matrix.hpp"
#include "cullcast/network/link_ensemble.hpp"
#include "cullcast/network/reef_metrics.hpp"
#include "cullcast/network/source_attribution.hpp"

namespace cullcast::network {

using Attributes = std::vector<std::pair<std::string, std::string>>;  // provenance

void write_connectivity_csv(const std::filesystem::path& path, const Connectivity& c,
                            const Ensemble& ensemble, double confidence);

void write_connectivity_netcdf(const std::filesystem::path& path, const Connectivity& c,
                               const Ensemble& ensemble, const Attributes& attributes);

// `k` is the number of generations of the reach column (named reach_k).
void write_reef_metrics_csv(const std::filesystem::path& path,
                            const std::vector<std::string>& reef_ids,
                            const std::vector<double>& output,
                            const std::vector<ReefMetrics>& metrics, int k);

void write_attribution_csv(const std::filesystem::path& path, const Connectivity& c,
                           const std::vector<Attribution>& attributions);

// Text of a number for CSV: shortest round-trip form; empty for NaN.
std::string csv_number(double value);

}  // namespace cullcast::network
