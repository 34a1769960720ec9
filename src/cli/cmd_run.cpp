#include "cli_context.hpp"
#include "brief_stage.hpp"
#include "connect_stage.hpp"
#include "disperse_stage.hpp"
#include "prioritise_stage.hpp"

namespace cullcast::cli {

void add_run_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("run", "Run every stage the scenario configures");
  cmd->footer(
      "Stages: disperse (drift) -> connect (connectivity) -> prioritise (when the scenario\n"
      "has a [cull] section) -> brief (briefing.html and GIS layers).\n"
      "Example:\n  cullcast run scenarios/lantern-reach.toml --threads 2");
  auto scenario = std::make_shared<std::string>();
  cmd->add_option("SCENARIO", *scenario, "Scenario file (TOML)")->required();
  cmd->callback([&ctx, scenario] {
    ctx.action = [&ctx, scenario]() -> int {
      const study::Study study = ctx.load(*scenario);
      if (!run_disperse_stage(ctx, study)) return 0;  // an MPI helper rank: rank 0 goes on
      run_connect_stage(ctx, study);
      if (study.cull.present) run_prioritise_stage(ctx, study);
      run_brief_stage(ctx, study);
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
