#include "disperse_stage.hpp"

#include <omp.h>

#include <cstdio>
#include <filesystem>
#include <optional>
#include <ostream>
#include <string>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/base/system_resources.hpp"
#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/depth_behaviour.hpp"
#include "cullcast/drift/resource_estimate.hpp"
#include "cullcast/reefs/reef_set.hpp"
#include "cullcast/reefs/release_plan.hpp"
#include "distributed_drift.hpp"
#include "number_text.hpp"
#include "progress_display.hpp"

namespace cullcast::cli {
namespace {

std::string threads_text(int n) { return std::to_string(n) + (n == 1 ? " thread" : " threads"); }

void print_summary(std::ostream& out, const drift::DriftSummary& s) {
  auto row = [&](const char* name, std::int64_t n, std::int64_t of) {
    char share[32];
    std::snprintf(share, sizeof share, "%6.2f %%", of > 0 ? 100.0 * n / of : 0.0);
    out << "  " << name << std::string(12 - std::string(name).size(), ' ')
        << std::string(14 - with_thousands(n).size(), ' ') << with_thousands(n) << "  " << share
        << "\n";
  };
  out << "Drift finished: " << s.events.size() << " spawning event(s)\n";
  const auto& t = s.totals;
  row("released", t.released, t.released);
  row("settled", t.settled, t.released);
  row("died", t.died, t.released);
  row("stranded", t.stranded, t.released);
  row("lost", t.lost, t.released);
  row("drifting", t.drifting, t.released);
  char rate[32];
  std::snprintf(rate, sizeof rate, "%.2f", s.particle_steps_per_s / 1e6);
  out << "  " << with_thousands(s.particle_steps) << " particle-steps in " << format_duration(s.seconds) << ": "
      << rate << " million particle-steps per second (" << threads_text(omp_get_max_threads())
      << (s.stepper.empty() ? "" : ", ") << s.stepper << ")\n";
  if (s.land_contacts > 0) {
    out << "  " << with_thousands(s.land_contacts) << " steps were held back from land\n";
  }
  out << "  settlement records: " << s.records_netcdf.string();
  if (!s.records_csv.empty()) out << " and " << s.records_csv.string();
  out << " (" << with_thousands(s.records) << " records)\n";
  out << "  physics:" << s.physics << "\n";
  if (!s.tracks_netcdf.empty()) {
    out << "  tracks: " << s.tracks_netcdf.string() << " (" << with_thousands(s.track_count)
        << " trajectories, " << with_thousands(s.track_samples) << " samples)\n";
  }
  if (!s.backward_csv.empty()) out << "  backward origins: " << s.backward_csv.string() << "\n";
}

}  // namespace

std::optional<drift::DriftSummary> run_disperse_stage(const CliContext& ctx, const study::Study& study) {
  DriftTeam team;  // one process, or the ranks of an MPI job (distributed_drift.hpp)
  const bool root = team.root();
  std::optional<currents::CurrentField> field;
  std::optional<reefs::ReefSet> reef_set;
  drift::DriftSummary summary;
  try {
    if (!ctx.quiet && root) {
      ctx.out << "Study \"" << study.study.name << "\" (seed " << study.study.seed << ", "
              << study.motion.scheme << ", dt " << study.motion.dt_minutes << " min, Kh "
              << study.motion.kh_m2_s << " m2/s, " << threads_text(omp_get_max_threads()) << ")\n";
    }
    field.emplace(currents::CurrentField::open(study.currents));
    field->set_background_reads(team.processor_spare());  // counts the other ranks on this machine
    // Larvae that stay near the surface need only the upper levels of 3-D currents.
    const std::size_t levels = field->grid().nz;
    const double deepest = drift::deepest_reach_m(study);
    const int kept = field->limit_depth(deepest);
    reef_set.emplace(reefs::ReefSet::load(study.reefs));
    const auto sources = reefs::release_sources(*reef_set, study);
    if (!ctx.quiet && root) {
      ctx.out << "  " << study.currents.files.size() << " currents file(s), "
              << field->frame_count() << " frames; " << reef_set->size() << " reefs, "
              << sources.size() << " release sources\n";
      if (static_cast<std::size_t>(kept) < levels) {
        ctx.out << "  reading " << kept << " of " << levels << " depth levels, down to "
                << fixed_text(field->grid().depths_m.back(), 1) << " m (larvae go no deeper than "
                << fixed_text(deepest, 1) << " m)\n";
      }
      if (team.size() > 1) ctx.out << "  " << team.describe(study, sources.size()) << "\n";
    }
    const std::string binding = team.binding_warning();
    if (root && !binding.empty()) ctx.err << "cullcast: warning: " << binding << "\n";
    drift::check_resources(drift::estimate_resources(study, *field, *reef_set, sources),
                           {available_memory_bytes(), ctx.max_memory_bytes,
                            available_disk_bytes(study.outputs.dir), study.outputs.dir.string()});
    if (root && std::filesystem::is_directory(study.outputs.dir)) {
      const std::size_t stale = remove_stale_temporaries(study.outputs.dir);
      if (stale > 0 && !ctx.quiet) {
        ctx.err << "cullcast: note: removed " << stale << " unfinished temporary file(s) of an interrupted run from "
                << study.outputs.dir.string() << "\n";
      }
    }
    // Checkpoints and --resume: single-process runs (checkpoint.hpp).
    drift::CheckpointSettings checkpoint;
    if (team.size() == 1 && (ctx.checkpoint_minutes > 0 || ctx.resume)) {
      checkpoint.file = study.outputs.dir / "drift.checkpoint";
    }
    checkpoint.every_s = ctx.checkpoint_minutes * 60.0;
    checkpoint.resume = ctx.resume;
    if (ctx.resume && team.size() > 1) {
      throw InputError("--resume continues single-process runs only; run it without mpirun");
    }
    if (!ctx.resume && !checkpoint.file.empty() && std::filesystem::exists(checkpoint.file) && !ctx.quiet) {
      ctx.err << "cullcast: note: " << checkpoint.file.string()
              << " holds the state of an interrupted run; starting afresh (use --resume to continue it)\n";
    }
    if (ctx.resume && !ctx.quiet) ctx.out << "  resuming from " << checkpoint.file.string() << "\n";
    ProgressDisplay display(ctx.err, root && ctx.show_progress(), field->calendar());
    summary = drift::run_drift(study, *field, *reef_set, sources,
                               [&](const drift::DriftProgress& p) { display(p); },
                               team.share(study, sources.size()), checkpoint);
    display.finish();
    if (!ctx.quiet && root && !team.queue_report().empty()) ctx.out << "  " << team.queue_report() << "\n";
  } catch (const InputError& e) {
    if (team.size() == 1) throw;
    team.fail(std::string("error: ") + e.what(), static_cast<int>(ExitCode::bad_input));
  } catch (const std::exception& e) {
    if (team.size() == 1) throw;
    team.fail(std::string("failed: ") + e.what(), static_cast<int>(ExitCode::runtime_failure));
  }
  team.finish();
  if (!root) return std::nullopt;  // rank 0 wrote the outputs and runs the later stages
  if (!study.backward.sink.empty()) summary.backward_csv = drift::run_backward(study, *field, *reef_set);
  for (const auto& w : summary.warnings) ctx.err << "cullcast: warning: " << w << "\n";
  if (!ctx.quiet) print_summary(ctx.out, summary);
  return summary;
}

}  // namespace cullcast::cli
