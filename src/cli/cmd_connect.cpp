#include <CLI/CLI.hpp>

#include "cli_context.hpp"
#include "connect_stage.hpp"

namespace cullcast::cli {

void add_connect_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("connect", "Build connectivity matrices and network metrics from settlement records");
  cmd->footer("Example:\n  cullcast connect scenarios/demo.toml");
  auto scenario = std::make_shared<std::string>();
  cmd->add_option("SCENARIO", *scenario, "Scenario file (TOML)")->required();
  cmd->callback([&ctx, scenario] {
    ctx.action = [&ctx, scenario]() -> int {
      const study::Study study = ctx.load_for_outputs(*scenario, "connect");
      run_connect_stage(ctx, study);
      return 0;
    };
  });
}

}  // namespace cullcast::cli
