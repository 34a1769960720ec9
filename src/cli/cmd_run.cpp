#include <CLI/CLI.hpp>

#include "cli_context.hpp"
#include "pipeline.hpp"

namespace cullcast::cli {

void add_run_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("run", "Run every stage the scenario configures");
  cmd->footer(
      "Stages: disperse (drift) -> connect (connectivity) -> prioritise (when the scenario\n"
      "has a [cull] section) -> brief (briefing.html and GIS layers).\n"
      "With --previous DIR the briefing opens with what changed since the plan in DIR\n"
      "(DIR may be the outputs folder itself: its last plan is kept in previous-plan/).\n"
      "Example:\n  cullcast run scenarios/lantern-reach.toml --threads 2");
  auto scenario = std::make_shared<std::string>();
  auto previous = std::make_shared<std::string>();
  cmd->add_option("SCENARIO", *scenario, "Scenario file (TOML)")->required();
  add_checkpoint_options(*cmd, ctx);
  cmd->add_option("--previous", *previous, "Outputs folder of the last plan, to compare with")
      ->type_name("DIR");
  cmd->callback([&ctx, scenario, previous] {
    ctx.action = [&ctx, scenario, previous]() -> int {
      const study::Study study = ctx.load_for_outputs(*scenario, "run");
      PipelineOptions options;
      if (!previous->empty()) options.previous = keep_previous(*previous, study.outputs.dir);
      if (run_pipeline(ctx, study, options).helper_rank) return 0;  // an MPI helper rank: rank 0 goes on
      if (!ctx.quiet) {
        ctx.out << "Outputs are in " << study.outputs.dir.string() << ".\n"
                << "Outputs are decision support with stated uncertainty; field work follows "
                   "local dive-safety codes, permits and licensed practice.\n";
      }
      return 0;
    };
  });
}

}  // namespace cullcast::cli
