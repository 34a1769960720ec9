#include <iostream>

#include <CLI/CLI.hpp>

#include "cli_context.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/currents/synthetic_currents.hpp"

namespace cullcast::cli {

void add_demo_data_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand("demo-data", "Write synthetic CF-NetCDF currents for demos and tests");
  cmd->footer(
      "Kinds: demo (invented 'Lantern Reach' archipelago, 149.75..150.85 E, 20.65..19.75 S, ~1.3 km, hourly,\n"
      "       from 2026-12-01 and, by default, again from 2027-12-01 in another season's weather),\n"
      "       uniform, eddy (solid-body, 2-day turn), double-gyre (Shadden, Lekien & Marsden 2005).\n"
      "One file per --days-per-file days; files are written atomically. With --seasons N, N records of\n"
      "--days days each, one calendar year apart (a gap between them).\n"
      "Examples:\n  cullcast demo-data scenarios/demo/currents\n"
      "  cullcast demo-data --kind double-gyre --days 5 /tmp/gyre");
  struct Args {
    std::string dir;
    std::string kind = "demo";
    double days = 50;
    double days_per_file = 10;
    int seasons = 0;  // 0: the kind's default (demo 2, others 1)
  };
  auto args = std::make_shared<Args>();
  cmd->add_option("DIR", args->dir, "Output folder")->required();
  cmd->add_option("--kind", args->kind, "demo | uniform | eddy | double-gyre")
      ->check(CLI::IsMember({"demo", "uniform", "eddy", "double-gyre"}))
      ->capture_default_str();
  cmd->add_option("--days", args->days, "Length of the record, days")->check(CLI::Range(0.05, 3660.0))->capture_default_str();
  cmd->add_option("--days-per-file", args->days_per_file, "Days per file")->check(CLI::Range(0.05, 3660.0))->capture_default_str();
  cmd->add_option("--seasons", args->seasons, "Records one year apart, each --days long (default: demo 2, others 1)")
      ->check(CLI::Range(1, 20));
  cmd->callback([&ctx, args] {
    ctx.action = [&ctx, args]() -> int {
      currents::SyntheticOptions options;
      options.kind = currents::synthetic_kind_from_name(args->kind);
      options.days = args->days;
      options.days_per_file = args->days_per_file;
      options.seasons = args->seasons > 0 ? args->seasons : (options.kind == currents::SyntheticKind::demo ? 2 : 1);
      if (options.kind == currents::SyntheticKind::demo) {
        // The archipelago's reefs lie in 150.0..150.6 E, 20.4..20.0 S; the
        // currents reach 0.25 degrees beyond, so larvae that drift off the
        // reefs for days can still come back.
        options.lon_min = 149.75, options.lon_max = 150.85;
        options.lat_min = -20.65, options.lat_max = -19.75;
        options.spacing_deg = 0.0125;
      }
      const auto files = currents::write_synthetic_currents(args->dir, options);
      if (!ctx.quiet) {
        for (const auto& f : files) ctx.out << "wrote " << f.string() << "\n";
      }
      return 0;
    };
  });
}

}  // namespace cullcast::cli
