#pragma once
// The drift stage as the commands run it: open inputs, drift, print a summary.
#include "cli_context.hpp"
#include "cullcast/drift/drift_run.hpp"

namespace cullcast::cli {

drift::DriftSummary run_disperse_stage(const CliContext& ctx, const study::Study& study);

}  // namespace cullcast::cli
