#include "pipeline.hpp"

#include <system_error>

#include "cullcast/base/error.hpp"
#include "disperse_stage.hpp"

namespace cullcast::cli {
namespace fs = std::filesystem;
namespace {

constexpr const char* kDriftFiles[] = {"settlement.nc", "settlement.csv", "tracks.nc",
                                       "backward_origins.csv"};
constexpr const char* kCompareFiles[] = {"connectivity.csv", "reef_metrics.csv", "cull_ranking.csv",
                                         "cull_curve.csv"};

void copy_atomically(const fs::path& from, const fs::path& to) {
  const fs::path temp = to.parent_path() / ("." + to.filename().string() + ".copying");
  fs::copy_file(from, temp, fs::copy_options::overwrite_existing);
  fs::rename(temp, to);
}

}  // namespace

void copy_drift_outputs(const fs::path& from, const fs::path& to) {
  fs::create_directories(to);
  for (const char* name : kDriftFiles) {
    std::error_code error;
    if (fs::is_regular_file(from / name, error)) {
      copy_atomically(from / name, to / name);
    } else {
      fs::remove(to / name, error);  // stale file from an earlier run
    }
  }
}

fs::path keep_previous(const fs::path& previous, const fs::path& outputs_dir) {
  std::error_code error;
  if (!fs::is_directory(previous, error)) {
    throw InputError("--previous " + previous.string() +
                     ": not a folder (give the outputs folder of the last plan)");
  }
  if (!fs::exists(outputs_dir, error) || !fs::equivalent(previous, outputs_dir, error))
    return previous;
  const fs::path kept = outputs_dir / "previous-plan";
  fs::create_directories(kept);
  bool any = false;
  for (const char* name : kCompareFiles) {
    if (fs::is_regular_file(previous / name, error)) {
      copy_atomically(previous / name, kept / name);
      any = true;
    } else {
      fs::remove(kept / name, error);
    }
  }
  if (!any) {
    throw InputError("--previous " + previous.string() +
                     ": no connectivity.csv or reef_metrics.csv there (not the outputs of a run)");
  }
  return kept;
}

PipelineSummary run_pipeline(const CliContext& ctx, const study::Study& study,
                             const PipelineOptions& options) {
  PipelineSummary s;
  if (!options.settlement_from.empty()) {
    copy_drift_outputs(options.settlement_from, study.outputs.dir);
    if (!ctx.quiet) {
      ctx.out << "Drift shared: settlement records copied from " << options.settlement_from.string()
              << " (same drift settings)\n";
    }
  } else {
    s.drift = run_disperse_stage(ctx, study);
    if (!s.drift) {  // an MPI helper rank: rank 0 wrote the records and runs the later stages
      s.helper_rank = true;
      return s;
    }
  }
  s.connect = run_connect_stage(ctx, study);
  if (study.cull.present) s.prioritise = run_prioritise_stage(ctx, study);
  s.brief = run_brief_stage(ctx, study, options.previous);
  return s;
}

}  // namespace cullcast::cli
