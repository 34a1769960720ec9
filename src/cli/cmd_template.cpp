#include <CLI/CLI.hpp>

#include "cli_context.hpp"
#include "cullcast/study/load_study.hpp"

namespace cullcast::cli {

void add_template_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("template", "Print a commented starter scenario");
  cmd->footer("Example:\n  cullcast template > my-study.toml");
  cmd->callback([&ctx] {
    ctx.action = [&ctx] {
      ctx.out << study::scenario_template();
      return 0;
    };
  });
}

}  // namespace cullcast::cli
