#include <CLI/CLI.hpp>

#include "cli_context.hpp"
#include "disperse_stage.hpp"

namespace cullcast::cli {

void add_checkpoint_options(CLI::App& cmd, CliContext& ctx) {
  cmd.add_flag("--resume", ctx.resume,
               "Continue an interrupted drift from <outputs>/drift.checkpoint (same scenario, same --set); "
               "results are identical to an uninterrupted run");
  cmd.add_option("--checkpoint-minutes", ctx.checkpoint_minutes,
                 "Save the drift state every this many minutes of wall-clock time (0 = never)")
      ->check(CLI::NonNegativeNumber)
      ->capture_default_str();
}

void add_disperse_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd =
      app.add_subcommand("disperse", "Release and drift larvae; write settlement records");
  cmd->footer("Example:\n  cullcast disperse scenarios/lantern-reach.toml --threads 2");
  auto scenario = std::make_shared<std::string>();
  cmd->add_option("SCENARIO", *scenario, "Scenario file (TOML)")->required();
  add_checkpoint_options(*cmd, ctx);
  cmd->callback([&ctx, scenario] {
    ctx.action = [&ctx, scenario]() -> int {
      const study::Study study = ctx.load_for_outputs(*scenario, "disperse");
      run_disperse_stage(ctx, study);
      return 0;
    };
  });
}

}  // namespace cullcast::cli
