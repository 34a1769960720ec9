#include <omp.h>
#include <unistd.h>

#include <cstdio>
#include <iostream>

#include <CLI/CLI.hpp>

#include "cli_context.hpp"
#include "distributed_drift.hpp"
#include "cullcast/base/byte_size.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/base/suggest.hpp"

namespace cullcast::cli {

study::Study CliContext::load(const std::string& scenario) const {
  study::LoadOptions options;
  options.overrides = overrides;
  return study::load_study(scenario, options);
}

study::Study CliContext::load_for_outputs(const std::string& scenario, const std::string& command) {
  study::Study study = load(scenario);
  // Under mpirun only rank 0 writes outputs, so only rank 0 holds the lock.
  if (!output_lock && launched_rank() == 0) {
    output_lock.emplace(OutputLock::acquire(study.outputs.dir, command));
    if (!output_lock->stale_note().empty()) err << "cullcast: warning: " << output_lock->stale_note() << "\n";
  }
  return study;
}

bool CliContext::show_progress() const { return !quiet && ::isatty(STDERR_FILENO) == 1; }

namespace {

constexpr const char* kExitCodes =
    "Exit codes: 0 success, 1 runtime failure, 2 usage error, 3 bad input,\n"
    "            4 stage not built yet, 5 interrupted, 6 output folder in use.\n"
    "Outputs are decision support with stated uncertainty; field work follows\n"
    "local dive-safety codes, permits and licensed practice.";

int code(ExitCode c) { return static_cast<int>(c); }

}  // namespace

int run(int argc, const char* const* argv, std::ostream& out, std::ostream& err) {
  CliContext ctx{out, err, 0, false, {}, false, 5.0, {}, {}, 0};
  CLI::App app{
      "cullcast: larval connectivity and cull prioritisation for coral-eating starfish "
      "outbreaks",
      "cullcast"};
  app.footer(kExitCodes);
  app.set_version_flag("--version", std::string("cullcast ") + CULLCAST_VERSION);
  app.require_subcommand(1, 1);
  app.fallthrough(true);
  app.add_option("--threads", ctx.threads, "Worker threads (default: all cores)")
      ->check(CLI::Range(1, 1024));
  app.add_flag("-q,--quiet", ctx.quiet, "No progress display and no summary");
  app.add_option("--set", ctx.overrides,
                 "Override a scenario value: section.key=value (repeatable; "
                 "spawning.N.key for one spawning block)")
      ->type_name("KEY=VALUE")
      ->allow_extra_args(false);

  app.add_option_function<std::string>(
         "--max-memory", [&ctx](const std::string& text) { ctx.max_memory_bytes = parse_byte_size(text); },
         "Refuse a drift that would need more memory than this, e.g. 2GiB or 500MB "
         "(default: the memory the machine has free)")
      ->type_name("SIZE")
      ->check(CLI::Validator(
          [](std::string& text) -> std::string {
            try {
              if (parse_byte_size(text) == 0) return "--max-memory must be more than 0 bytes";
              return {};
            } catch (const std::invalid_argument& e) {
              return e.what();
            }
          },
          "SIZE"));

  add_run_command(app, ctx);
  add_disperse_command(app, ctx);
  add_connect_command(app, ctx);
  add_prioritise_command(app, ctx);
  add_brief_command(app, ctx);
  add_sweep_command(app, ctx);
  add_compare_command(app, ctx);
  add_converge_command(app, ctx);
  add_hydro_check_command(app, ctx);
  add_template_command(app, ctx);
  add_demo_data_command(app, ctx);

  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp&) {
    out << app.help();
    return code(ExitCode::ok);
  } catch (const CLI::CallForAllHelp&) {
    out << app.help("", CLI::AppFormatMode::All);
    return code(ExitCode::ok);
  } catch (const CLI::CallForVersion& e) {
    out << e.what() << "\n";
    return code(ExitCode::ok);
  } catch (const CLI::ParseError& e) {
    const std::vector<std::string> left = app.remaining();
    if (app.get_subcommands().empty() && !left.empty() && !left.front().empty() &&
        left.front()[0] != '-') {
      std::vector<std::string> names;
      for (const CLI::App* sub : app.get_subcommands({})) names.push_back(sub->get_name());
      const std::string hint = closest_match(left.front(), names);
      err << "cullcast: unknown command '" << left.front() << "'"
          << (hint.empty() ? "" : " (did you mean '" + hint + "'?)")
          << "\nRun 'cullcast --help' for usage.\n";
      return code(ExitCode::usage);
    }
    err << "cullcast: " << e.what() << "\nRun 'cullcast --help' for usage.\n";
    return code(ExitCode::usage);
  }

  if (ctx.threads > 0) omp_set_num_threads(ctx.threads);
  try {
    if (!ctx.action) {
      err << "cullcast: no command given. Run 'cullcast --help' for usage.\n";
      return code(ExitCode::usage);
    }
    return ctx.action();
  } catch (const InputError& e) {
    err << "cullcast: error: " << e.what() << "\n";
    return code(ExitCode::bad_input);
  } catch (const OutputBusyError& e) {
    err << "cullcast: error: " << e.what() << "\n";
    return code(ExitCode::busy);
  } catch (const ResourceError& e) {
    err << "cullcast: error: " << e.what() << "\n";
    return code(ExitCode::runtime_failure);
  } catch (const NotBuiltError& e) {
    err << "cullcast: not built yet: " << e.what() << "\n";
    return code(ExitCode::not_built);
  } catch (const std::exception& e) {
    err << "cullcast: failed: " << e.what() << "\n";
    return code(ExitCode::runtime_failure);
  }
}

}  // namespace cullcast::cli
