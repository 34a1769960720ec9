#include "cli_context.hpp"
#include "cullcast/base/error.hpp"

namespace cullcast::cli {

void add_demo_data_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("demo-data", "Write synthetic CF-NetCDF currents for demos and tests");
  cmd->footer("Example:\n  cullcast demo-data scenarios/demo/currents");
  auto dir = std::make_shared<std::string>();
  cmd->add_option("DIR", *dir, "Output folder")->required();
  cmd->callback([&ctx, dir] {
    ctx.action = [&ctx, dir]() -> int {
      throw NotBuiltError("demo-data: the currents writer is not built in this version");
    };
  });
}

}  // namespace cullcast::cli
