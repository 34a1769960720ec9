#include <CLI/CLI.hpp>
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <ostream>

#include "cli_context.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/currents/current_field.hpp"
#include "number_text.hpp"

namespace cullcast::cli {
namespace {

std::string duration(double s) {
  if (s >= 86400.0 && std::fmod(s, 3600.0) == 0 && s >= 2 * 86400.0)
    return fixed_text(s / 86400.0, 2) + " days";
  if (s >= 3600.0)
    return fixed_text(s / 3600.0, s == std::floor(s / 3600.0) * 3600.0 ? 0 : 2) + " h";
  if (s >= 60.0) return fixed_text(s / 60.0, 1) + " min";
  return fixed_text(s, 1) + " s";
}

int hydro_check(CliContext& ctx, const std::vector<std::string>& inputs) {
  study::CurrentsSettings settings;
  if (inputs.size() == 1 && inputs[0].size() > 5 && inputs[0].substr(inputs[0].size() - 5) == ".toml") {
    settings = ctx.load(inputs[0]).currents;
  } else {
    for (const auto& p : inputs) {
      if (!std::filesystem::exists(p)) throw InputError("hydro-check: no such file '" + p + "'");
      settings.files.emplace_back(p);
    }
  }
  auto field = currents::CurrentField::open(settings);
  std::ostream& out = ctx.out;
  const auto& g = field.grid();
  const auto& names = field.variables();
  out << "currents: " << field.files().size() << " file(s), " << field.frame_count() << " frames\n";
  for (const auto& f : field.files()) out << "  " << f << "\n";
  auto shown = [](const std::string& s) { return s.empty() ? std::string("-") : "'" + s + "'"; };
  out << "variables: u=" << shown(names.u) << " v=" << shown(names.v) << " w=" << shown(names.w)
      << " temperature=" << shown(names.temperature) << " chlorophyll=" << shown(names.chlorophyll)
      << " time=" << shown(names.time) << "\n";
  out << "grid: " << (g.kind == currents::GridKind::regular ? "regular lon/lat" : "curvilinear (2-D lon/lat)") << ", "
      << g.nx << " x " << g.ny << " nodes (lon x lat)";
  out << ", " << (g.depths_m.empty() ? std::string("2-D (no depth axis)") : std::to_string(g.nz) + " depth levels") << "\n";
  out << "extent: lon " << fixed_text(g.lon_min, 4) << " .. " << fixed_text(g.lon_max, 4)
      << " E, lat " << fixed_text(g.lat_min, 4) << " .. " << fixed_text(g.lat_max, 4) << " N\n";
  out << "resolution: " << fixed_text(g.min_spacing_m / 1000.0, 3) << " km smallest, "
      << fixed_text(g.mean_spacing_m / 1000.0, 3) << " km typical node spacing\n";
  if (!g.depths_m.empty()) {
    out << "depth levels (m, positive down):";
    for (double d : g.depths_m) out << " " << fixed_text(d, 1);
    out << "\n";
  }
  out << "time: " << field.format_time(field.time_begin_s()) << " .. " << field.format_time(field.time_end_s()) << " ("
      << duration(field.time_end_s() - field.time_begin_s()) << "), step " << duration(field.frame_step_s())
      << ", calendar " << field.calendar().name() << (settings.calendar.empty() ? "" : " (set by the scenario)") << "\n";
  if (field.gaps().empty()) {
    out << "gaps: none\n";
  } else {
    out << "gaps: " << field.gaps().size() << " (longer than 1.5 steps)\n";
    for (const auto& gap : field.gaps()) {
      out << "  " << field.format_time(gap.from_s) << " .. " << field.format_time(gap.to_s) << " ("
          << duration(gap.to_s - gap.from_s) << " without frames)\n";
    }
  }
  out << "land: " << fixed_text(100.0 * g.land_fraction, 1) << "% of surface nodes masked\n";
  out.flush();

  // Speeds: one frame at a time; 1 mm/s histogram bins up to the 10 m/s limit.
  constexpr double kBin_m_s = 0.001;
  std::vector<std::uint64_t> histogram(10001, 0);
  std::vector<float> speeds;
  double max_speed = 0, courant = std::numeric_limits<double>::infinity(), max_time = 0, courant_time = 0;
  std::uint64_t values = 0;
  for (std::size_t k = 0; k < field.frame_count(); ++k) {
    const currents::FrameScan scan = field.scan_frame(k, &speeds);
    for (float s : speeds) ++histogram[std::min<std::size_t>(histogram.size() - 1, static_cast<std::size_t>(s / kBin_m_s))];
    values += speeds.size();
    if (scan.max_speed_m_s > max_speed) { max_speed = scan.max_speed_m_s; max_time = scan.time_s; }
    if (scan.courant_dt_s < courant) { courant = scan.courant_dt_s; courant_time = scan.time_s; }
    if (ctx.show_progress() && k % 50 == 0) ctx.err << "\rscanning frame " << k + 1 << "/" << field.frame_count() << std::flush;
  }
  if (ctx.show_progress()) ctx.err << "\r                                   \r";
  double p99 = 0;
  std::uint64_t below = 0;
  for (std::size_t b = 0; b < histogram.size(); ++b) {
    below += histogram[b];
    if (static_cast<double>(below) >= 0.99 * static_cast<double>(values)) { p99 = (static_cast<double>(b) + 1) * kBin_m_s; break; }
  }
  out << "speed: max " << fixed_text(max_speed, 3) << " m/s at " << field.format_time(max_time)
      << ", 99th percentile " << fixed_text(p99, 3) << " m/s (" << field.frame_count()
      << " frames, " << values << " wet node values)\n";
  if (std::isfinite(courant)) {
    out << "largest step with Courant number <= 1 (|u| dt/dx + |v| dt/dy at every wet node): "
        << fixed_text(courant, 0) << " s (" << fixed_text(courant / 60.0, 1)
        << " min), limiting frame " << field.format_time(courant_time) << "\n";
  } else {
    out << "largest step with Courant number <= 1: unlimited (no flow)\n";
  }
  return 0;
}

}  // namespace

void add_hydro_check_command(CLI::App& app, CliContext& ctx) {
  CLI::App* cmd = app.add_subcommand(
      "hydro-check", "Inspect currents files (CF-NetCDF) or a scenario's currents");
  cmd->footer("Examples:\n  cullcast hydro-check hydro_samples/*.nc\n"
              "  cullcast hydro-check scenarios/demo.toml");
  auto inputs = std::make_shared<std::vector<std::string>>();
  cmd->add_option("INPUT", *inputs, "NetCDF files, or one scenario file")->required();
  cmd->callback([&ctx, inputs] {
    ctx.action = [&ctx, inputs]() -> int { return hydro_check(ctx, *inputs); };
  });
}

}  // namespace cullcast::cli
