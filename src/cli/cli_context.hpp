#pragma once
// What every subcommand shares: output streams, global options, and the one
// action the parsed command line selected.
#include <cstdint>
#include <functional>
#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include "cullcast/base/output_lock.hpp"
#include "cullcast/study/load_study.hpp"

// Only the files that define commands include CLI11 (header-only, and as
// costly to compile as the rest of a file): the others see a declaration.
namespace CLI {
class App;
}

namespace cullcast::cli {

struct CliContext {
  std::ostream& out;
  std::ostream& err;
  int threads = 0;                     // 0 = OpenMP default
  bool quiet = false;                  // no progress, no summaries
  std::vector<std::string> overrides;  // --set section.key=value
  // Drift checkpoints (disperse, run): continue an interrupted run, and how
  // often (wall-clock minutes) to save the state.
  bool resume = false;
  double checkpoint_minutes = 5.0;
  std::function<int()> action;         // set by the chosen subcommand
  std::optional<OutputLock> output_lock;  // held until run() returns
  std::uint64_t max_memory_bytes = 0;     // --max-memory; 0 = what the machine has free

  study::Study load(const std::string& scenario) const;
  // For commands that write outputs: load, then lock [outputs] dir for this
  // process (OutputBusyError when another live run holds it).
  study::Study load_for_outputs(const std::string& scenario, const std::string& command);
  bool show_progress() const;  // a terminal on stderr and not --quiet
};

// Adds --resume and --checkpoint-minutes to a command that drifts larvae.
void add_checkpoint_options(CLI::App& cmd, CliContext& ctx);

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
