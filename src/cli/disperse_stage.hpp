#pragma once
// The drift stage as the commands run it: open inputs, drift, print a summary.
// Under mpirun the ranks share the drift (distributed_drift.hpp); only rank 0
// gets a summary back: the others have nothing more to do.
#include <optional>

#include "cli_context.hpp"
#include "cullcast/drift/drift_run.hpp"

namespace cullcast::cli {

std::optional<drift::DriftSummary> run_disperse_stage(const CliContext& ctx, const study::Study& study);

}  // namespace cullcast::cli
