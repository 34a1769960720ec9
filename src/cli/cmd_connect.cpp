#include "cli_context.hpp"
#include "cullcast/base/error.hpp"

namespace cullcast::cli {

void add_connect_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("connect", "Build connectivity matrices and network metrics from settlement records");
  cmd->footer("Example:\n  cullcast connect scenarios/demo.toml");
  auto scenario = std::make_shared<std::string>();
  cmd->add_option("SCENARIO", *scenario, "Scenario file (TOML)")->required();
  cmd->callback([&ctx, scenario] {
    ctx.action = [&ctx, scenario]() -> int {
      ctx.load(*scenario);  // validate the scenario before saying what is missing
      throw NotBuiltError("the connectivity stage is not built in this version of cullcast");
    };
  });
}

}  // namespace cullcast::cli
