#pragma once
// The cull prioritisation stage as the commands run it: read the settlement
// records, check their bookkeeping, build the cull model, optimise, assess the
// plan across spawning events, write cull_ranking.csv and cull_curve.csv, print
// the ranked plan with its explanations.
#include <filesystem>
#include <string>
#include <vector>

#include "cli_context.hpp"

namespace cullcast::cli {

struct PrioritiseSummary {
  std::vector<std::filesystem::path> outputs;  // files written
  std::string method;                          // optimiser used
  double averted_pct = 0;                      // of the weighted settlement on priority reefs, %
  int reefs = 0;                               // reefs in the plan
  std::vector<std::string> warnings;
};

// Throws InputError when settlement.nc is missing (run `cullcast disperse`
// first), does not add up, or does not match the scenario's reefs.
PrioritiseSummary run_prioritise_stage(const CliContext& ctx, const study::Study& study);

}  // namespace cullcast::cli
