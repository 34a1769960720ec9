#include <filesystem>

#include <CLI/CLI.hpp>

#include "cli_context.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/compare/run_comparison.hpp"
#include "cullcast/report/comparison_section.hpp"

namespace cullcast::cli {

void add_compare_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand(
      "compare", "Compare the outputs of two runs, link by link and rank by rank");
  cmd->footer(
      "RUN_A and RUN_B are outputs folders (A = before / baseline, B = after / variant).\n"
      "Writes comparison_links.csv, comparison_reefs.csv, comparison_summary.csv and\n"
      "comparison.html into --out (default RUN_B). Link differences are flagged with a\n"
      "two-proportion z-test on the settling particle counts (docs/sensitivity.md).\n"
      "Example:\n  cullcast compare out/baseline out/long-pld");
  struct Options {
    std::string a, b, out, name_a = "A", name_b = "B";
    double alpha = 0.05;
  };
  auto o = std::make_shared<Options>();
  cmd->add_option("RUN_A", o->a, "Outputs folder of the first run")->required();
  cmd->add_option("RUN_B", o->b, "Outputs folder of the second run")->required();
  cmd->add_option("--out", o->out, "Folder for the comparison files (default RUN_B)")
      ->type_name("DIR");
  cmd->add_option("--alpha", o->alpha, "Significance level of each link test (two-sided)")
      ->capture_default_str()
      ->check(CLI::Range(1e-9, 0.5));
  cmd->add_option("--name-a", o->name_a, "Short name of RUN_A in the page")->capture_default_str();
  cmd->add_option("--name-b", o->name_b, "Short name of RUN_B in the page")->capture_default_str();
  cmd->callback([&ctx, o] {
    ctx.action = [&ctx, o]() -> int {
      compare::CompareOptions options;
      options.alpha = o->alpha;
      const compare::RunOutputs a = compare::read_run_outputs(o->a);  // A first: errors in order
      const compare::RunOutputs b = compare::read_run_outputs(o->b);
      const compare::RunComparison c = compare::compare_runs(a, b, options);
      const std::filesystem::path out = std::filesystem::path(o->out.empty() ? o->b : o->out);
      auto files = compare::write_comparison_csv(out, "comparison", c);
      report::ComparisonLabels labels;
      labels.heading = "Comparison of two runs";
      labels.name_a = o->name_a;
      labels.name_b = o->name_b;
      report::write_comparison_html(out / "comparison.html", c, labels);
      files.push_back(out / "comparison.html");
      if (!ctx.quiet) {
        ctx.out << "Comparing " << o->a << " (" << o->name_a << ") with " << o->b << " ("
                << o->name_b << ")\n"
                << compare::comparison_summary(c) << "  outputs:";
        for (const auto& f : files) ctx.out << " " << f.filename().string();
        ctx.out << " in " << out.string() << "\n";
      }
      return 0;
    };
  });
}

}  // namespace cullcast::cli
