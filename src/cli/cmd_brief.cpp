#include <CLI/CLI.hpp>

#include "brief_stage.hpp"
#include "cli_context.hpp"
#include "pipeline.hpp"

namespace cullcast::cli {

void add_brief_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("brief", "Write the briefing (HTML, maps, GIS and NetCDF layers)");
  cmd->footer("Example:\n  cullcast brief scenarios/demo.toml\n"
              "Reads the outputs of disperse, connect (and prioritise with [cull]); writes briefing.html,\n"
              "briefing.gpkg and settlement_density.tif beside them. With --previous DIR the briefing\n"
              "opens with what changed since the plan in DIR.");
  auto scenario = std::make_shared<std::string>();
  auto previous = std::make_shared<std::string>();
  cmd->add_option("SCENARIO", *scenario, "Scenario file (TOML)")->required();
  cmd->add_option("--previous", *previous, "Outputs folder of the last plan, to compare with")
      ->type_name("DIR");
  cmd->callback([&ctx, scenario, previous] {
    ctx.action = [&ctx, scenario, previous]() -> int {
      const study::Study study = ctx.load_for_outputs(*scenario, "brief");
      std::filesystem::path prev;
      if (!previous->empty()) prev = keep_previous(*previous, study.outputs.dir);
      run_brief_stage(ctx, study, prev);
      return 0;
    };
  });
}

}  // namespace cullcast::cli
