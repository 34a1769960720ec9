#include "cli_context.hpp"
#include "cullcast/base/error.hpp"

namespace cullcast::cli {

void add_hydro_check_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand(
      "hydro-check", "Inspect currents files (CF-NetCDF) or a scenario's currents");
  cmd->footer("Examples:\n  cullcast hydro-check hydro_samples/*.nc\n"
              "  cullcast hydro-check scenarios/demo.toml");
  auto inputs = std::make_shared<std::vector<std::string>>();
  cmd->add_option("INPUT", *inputs, "NetCDF files, or one scenario file")->required();
  cmd->callback([&ctx, inputs] {
    ctx.action = [&ctx, inputs]() -> int {
      throw NotBuiltError("hydro-check: the currents reader is not built in this version");
    };
  });
}

}  // namespace cullcast::cli
