#pragma once
// The briefing stage as the commands run it: gather what the earlier stages
// wrote (settlement.nc, reef_metrics.csv, cull_ranking.csv/cull_curve.csv),
// the reefs and the currents' land mask, then write briefing.html,
// briefing.gpkg and settlement_density.tif (docs/briefing.md).
#include <filesystem>
#include <string>
#include <vector>

#include "cli_context.hpp"
#include "cullcast/report/briefing.hpp"

namespace cullcast::cli {

struct BriefSummary {
  std::vector<std::filesystem::path> outputs;  // files written
  std::vector<std::filesystem::path> reused;   // NetCDF written by earlier stages, listed for reuse
  std::vector<std::string> warnings;
};

// Everything the page shows, read from the study's outputs. Throws InputError
// naming the missing file and the command to run first.
report::BriefingData gather_briefing(const study::Study& study, std::vector<std::string>& warnings);

// With `previous` (the outputs folder of the last plan), the page opens with
// "What changed since the last plan" and changes_since_previous_*.csv are
// written beside it.
BriefSummary run_brief_stage(const CliContext& ctx, const study::Study& study,
                             const std::filesystem::path& previous = {});

}  // namespace cullcast::cli
