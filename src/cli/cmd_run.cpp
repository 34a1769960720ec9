#include "cli_context.hpp"
#include "cullcast/base/error.hpp"

namespace cullcast::cli {

void add_run_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("run", "Run every stage the scenario configures");
  cmd->footer("Example:\n  cullcast run scenarios/demo.toml --threads 2");
  auto scenario = std::make_shared<std::string>();
  cmd->add_option("SCENARIO", *scenario, "Scenario file (TOML)")->required();
  cmd->callback([&ctx, scenario] {
    ctx.action = [&ctx, scenario]() -> int {
      ctx.load(*scenario);
      throw NotBuiltError("the drift stage is not built in this version of cullcast");
    };
  });
}

}  // namespace cullcast::cli
