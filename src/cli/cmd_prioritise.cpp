#include <CLI/CLI.hpp>

#include "cli_context.hpp"
#include "prioritise_stage.hpp"

namespace cullcast::cli {

void add_prioritise_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("prioritise", "Rank candidate cull sites under an effort budget");
  cmd->footer("Example:\n  cullcast prioritise scenarios/demo.toml --set cull.vessel_days=12");
  auto scenario = std::make_shared<std::string>();
  cmd->add_option("SCENARIO", *scenario, "Scenario file (TOML)")->required();
  cmd->callback([&ctx, scenario] {
    ctx.action = [&ctx, scenario]() -> int {
      const study::Study study = ctx.load_for_outputs(*scenario, "prioritise");
      run_prioritise_stage(ctx, study);
      return 0;
    };
  });
}

}  // namespace cullcast::cli
