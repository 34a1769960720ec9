#pragma once
// What every subcommand shares: output streams, global options, and the one
// action the parsed command line selected.
#include <functional>
#include <iosfwd>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "cullcast/study/load_study.hpp"

namespace cullcast::cli {

struct CliContext {
  std::ostream& out;
  std::ostream& err;
  int threads = 0;                     // 0 = OpenMP default
  bool quiet = false;                  // no progress, no summaries
  std::vector<std::string> overrides;  // --set section.key=value
  std::function<int()> action;         // set by the chosen subcommand

  study::Study load(const std::string& scenario) const;
  bool show_progress() const;  // a terminal on stderr and not --quiet
};

// One function per subcommand (one file each: cmd_<name>.cpp).
void add_run_command(CLI::App& app, CliContext& ctx);
void add_disperse_command(CLI::App& app, CliContext& ctx);
void add_connect_command(CLI::App& app, CliContext& ctx);
void add_prioritise_command(CLI::App& app, CliContext& ctx);
void add_brief_command(CLI::App& app, CliContext& ctx);
void add_hydro_check_command(CLI::App& app, CliContext& ctx);
void add_template_command(CLI::App& app, CliContext& ctx);
void add_demo_data_command(CLI::App& app, CliContext& ctx);
void add_sweep_command(CLI::App& app, CliContext& ctx);
void add_compare_command(CLI::App& app, CliContext& ctx);
void add_converge_command(CLI::App& app, CliContext& ctx);

// Entry point used by main() and by the command-line tests.
int run(int argc, const char* const* argv, std::ostream& out, std::ostream& err);

}  // namespace cullcast::cli
