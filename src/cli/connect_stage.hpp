#pragma once
// The connectivity stage as the commands run it: read the settlement records,
// build matrices and metrics, write the outputs, print a summary.
#include <filesystem>
#include <string>
#include <vector>

#include "cli_context.hpp"

namespace cullcast::cli {

struct ConnectSummary {
  std::vector<std::filesystem::path> outputs;  // files written
  double persistence_eigenvalue = 0;           // lambda of the reproduction-scaled mean matrix
  double larval_eigenvalue = 0;                // lambda of the mean reef matrix P
  std::vector<std::string> warnings;
};

// Throws InputError when settlement.nc is missing (run `cullcast disperse`
// first) or does not match the scenario's reefs.
ConnectSummary run_connect_stage(const CliContext& ctx, const study::Study& study);

}  // namespace cullcast::cli
