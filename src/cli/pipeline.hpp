#pragma once
// Every stage of one study in order (what `run` does), shared by run, sweep and
// converge; and the "what changed since the last plan" comparison.
#include <filesystem>
#include <optional>

#include "brief_stage.hpp"
#include "cli_context.hpp"
#include "connect_stage.hpp"
#include "cullcast/compare/run_comparison.hpp"
#include "cullcast/drift/drift_run.hpp"
#include "prioritise_stage.hpp"

namespace cullcast::cli {

struct PipelineOptions {
  std::filesystem::path previous;  // outputs of the last plan; empty = none
  std::filesystem::path
      settlement_from;  // copy the drift outputs from this folder instead of drifting
};

struct PipelineSummary {
  std::optional<drift::DriftSummary> drift;  // empty when the settlement records were reused
  bool helper_rank = false;                  // an MPI rank other than 0: nothing after the drift
  ConnectSummary connect;
  std::optional<PrioritiseSummary> prioritise;
  BriefSummary brief;
};

PipelineSummary run_pipeline(const CliContext& ctx, const study::Study& study,
                             const PipelineOptions& options = {});

// The drift stage's files (settlement.nc, and settlement.csv, tracks.nc,
// backward_origins.csv when present) copied atomically from `from` to `to`.
void copy_drift_outputs(const std::filesystem::path& from, const std::filesystem::path& to);

// When `previous` is the folder the run is about to overwrite, keep its
// comparison inputs in <dir>/previous-plan first and return that folder;
// otherwise return `previous` unchanged. Throws InputError when it is missing.
std::filesystem::path keep_previous(const std::filesystem::path& previous,
                                    const std::filesystem::path& outputs_dir);

}  // namespace cullcast::cli
