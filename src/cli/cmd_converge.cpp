#include <cmath>
#include <cstdio>
#include <ostream>

#include <CLI/CLI.hpp>

#include "cli_context.hpp"
#include "cullcast/compare/convergence.hpp"
#include "cullcast/report/comparison_section.hpp"
#include "pipeline.hpp"
#include "progress_display.hpp"

namespace cullcast::cli {
namespace fs = std::filesystem;

void add_converge_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand(
      "converge", "Check whether the larvae per reef are enough: rerun with twice as many");
  cmd->footer(
      "Runs the scenario into <outputs>/convergence/base and, with twice the larvae per reef\n"
      "and the next seed (independent random numbers), into <outputs>/convergence/doubled;\n"
      "lists the links and cull ranks that still move and recommends larvae per reef for a\n"
      "target relative precision (docs/sensitivity.md, \"How many larvae?\").\n"
      "Example:\n  cullcast converge scenarios/lantern-reach.toml --precision 0.2 --probability "
      "1e-3");
  struct Options {
    std::string scenario;
    double precision = 0.2, probability = 1e-3, confidence = 0.95;
    bool verbose = false;
  };
  auto o = std::make_shared<Options>();
  cmd->add_option("SCENARIO", o->scenario, "Scenario file (TOML)")->required();
  cmd->add_option("--precision", o->precision, "Target relative half-width of a link probability")
      ->capture_default_str()
      ->check(CLI::Range(1e-3, 10.0));
  cmd->add_option("--probability", o->probability,
                  "Weakest link probability that must meet the target")
      ->capture_default_str()
      ->check(CLI::Range(1e-9, 0.999));
  cmd->add_option("--confidence", o->confidence, "Confidence of the interval")
      ->capture_default_str()
      ->check(CLI::Range(0.5, 0.9999));
  cmd->add_flag("--verbose", o->verbose, "Print every stage's summary");
  cmd->callback([&ctx, o] {
    ctx.action = [&ctx, o]() -> int {
      const study::Study base = ctx.load(o->scenario);
      const fs::path dir = base.outputs.dir / "convergence";
      std::vector<std::string> first = ctx.overrides, second = ctx.overrides;
      first.push_back("outputs.dir=\"" + (dir / "base").string() + "\"");
      second.push_back("outputs.dir=\"" + (dir / "doubled").string() + "\"");
      second.push_back("study.seed=" + std::to_string(base.study.seed + 1));
      for (std::size_t k = 0; k < base.spawning.size(); ++k) {
        second.push_back("spawning." + std::to_string(k + 1) + ".larvae_per_reef=" +
                         std::to_string(2 * base.spawning[k].larvae_per_reef));
      }
      study::LoadOptions lo;
      lo.overrides = first;
      const study::Study a = study::load_study(o->scenario, lo);
      lo.overrides = second;
      const study::Study b = study::load_study(o->scenario, lo);
      std::ostream null_out(nullptr);
      CliContext stage{
          o->verbose ? ctx.out : null_out, ctx.err, ctx.threads, ctx.quiet, ctx.overrides,
          false, ctx.checkpoint_minutes, {}, {}, ctx.max_memory_bytes};
      if (!ctx.quiet)
        ctx.out << "[1/2] " << base.spawning.front().larvae_per_reef
                << " larvae per reef and event (seed " << a.study.seed << ") into "
                << a.outputs.dir.string() << "\n";
      ctx.out.flush();
      run_pipeline(stage, a);
      if (!ctx.quiet)
        ctx.out << "[2/2] " << 2 * base.spawning.front().larvae_per_reef
                << " larvae per reef and event (seed " << b.study.seed << ") into "
                << b.outputs.dir.string() << "\n";
      ctx.out.flush();
      run_pipeline(stage, b);

      const compare::RunOutputs first_run = compare::read_run_outputs(a.outputs.dir);
      const compare::RunComparison c =
          compare::compare_runs(first_run, compare::read_run_outputs(b.outputs.dir));
      compare::write_comparison_csv(dir, "comparison", c);
      report::ComparisonLabels labels;
      labels.heading = "Convergence check: N versus 2N larvae per reef";
      labels.name_a = "N";
      labels.name_b = "2N";
      report::write_comparison_html(dir / "comparison.html", c, labels);
      compare::ConvergenceOptions co;
      co.relative_precision = o->precision;
      co.probability = o->probability;
      co.confidence = o->confidence;
      const compare::ConvergenceReport r = compare::assess_convergence(c, co);
      const std::int64_t events = static_cast<std::int64_t>(base.spawning.size());
      const std::int64_t per_reef = (r.particles_needed + events - 1) / events;
      char line[256];
      std::snprintf(line, sizeof line,
                    "%d of %d links with probability >= %g still move by more than %g %%",
                    static_cast<int>(r.moving.size()), r.links_considered, o->probability,
                    100 * o->precision);
      ctx.out << "Convergence (" << (dir / "comparison_summary.csv").string() << "):\n  " << line
              << " between N and 2N\n";
      for (std::size_t i = 0; i < r.moving.size() && i < 10; ++i) {
        const auto& m = r.moving[i];
        std::snprintf(line, sizeof line, "    %s -> %s: %.3g -> %.3g (%.0f %%)%s",
                      m.source_id.c_str(), m.sink_id.c_str(), m.fraction_a, m.fraction_b,
                      100 * m.relative_change,
                      m.significant ? ", beyond sampling noise (after the FDR adjustment)" : "");
        ctx.out << line << "\n";
      }
      ctx.out << compare::comparison_summary(c);
      if (!r.rank_shifts.empty()) {
        ctx.out << "  cull ranks that moved:";
        for (const auto& s : r.rank_shifts) {
          ctx.out << " " << s.reef_id << " " << (s.rank_a ? std::to_string(s.rank_a) : "out")
                  << "->" << (s.rank_b ? std::to_string(s.rank_b) : "out");
        }
        ctx.out << "\n";
      } else if (c.plans) {
        ctx.out << "  cull ranks: none moved\n";
      }
      std::snprintf(
          line, sizeof line,
          "  Recommendation: to estimate a link of probability %g to +/-%g %% (%g %% confidence) "
          "each source needs n = z^2 (1-p) / (r^2 p) = %lld larvae over all events, i.e. %lld "
          "larvae per reef per event for %lld event(s)",
          o->probability, 100 * o->precision, 100 * o->confidence,
          static_cast<long long>(r.particles_needed), static_cast<long long>(per_reef),
          static_cast<long long>(events));
      ctx.out << line << " (Cochran 1977, sample size for a proportion).\n";
      if (r.particles_b > 0) {
        std::snprintf(line, sizeof line,
                      "  With 2N (%lld per source) that link is known to +/-%.0f %%.",
                      static_cast<long long>(r.particles_b), 100 * r.precision_b);
        ctx.out << line << "\n";
      }
      return 0;
    };
  });
}

}  // namespace cullcast::cli
