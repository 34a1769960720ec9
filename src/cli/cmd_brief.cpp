#include "brief_stage.hpp"
#include "cli_context.hpp"

namespace cullcast::cli {

void add_brief_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("brief", "Write the briefing (HTML, maps, GIS and NetCDF layers)");
  cmd->footer("Example:\n  cullcast brief scenarios/demo.toml\n"
              "Reads the outputs of disperse, connect (and prioritise with [cull]); writes briefing.html,\n"
              "briefing.gpkg and settlement_density.tif beside them.");
  auto scenario = std::make_shared<std::string>();
  cmd->add_option("SCENARIO", *scenario, "Scenario file (TOML)")->required();
  cmd->callback([&ctx, scenario] {
    ctx.action = [&ctx, scenario]() -> int {
      const study::Study study = ctx.load_for_outputs(*scenario, "brief");
      run_brief_stage(ctx, study);
      return 0;
    };
  });
}

}  // namespace cullcast::cli
