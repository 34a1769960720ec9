#pragma once
// Synthetic CF-NetCDF currents from formulas, for demos, tests and benchmarks.
// Deterministic: the same options give byte-identical files.
//
// Kinds (all on a lon/lat box, velocities in m/s):
//  - uniform:     u = 0.10, v = 0.05 everywhere.
//  - eddy:        solid-body rotation about the box centre, period 2 days.
//  - double-gyre: the time-dependent double gyre of Shadden, Lekien & Marsden
//                 (2005), Physica D 212:271-304 (A = 0.1, eps = 0.25,
//                 omega = 2 pi / 10), domain [0,2]x[0,1] mapped onto the box
//                 with one length unit L = box height (m) and one time unit
//                 T = L / (1 m/s), so velocities are the non-dimensional ones in m/s.
//  - demo:        the invented "Lantern Reach" archipelago: north-westward shelf
//                 current (~0.2 m/s) varying from day to day, M2 + S2 tidal
//                 ellipses, two drifting eddies, islands as land (_FillValue),
//                 3 depth levels, temperature and chlorophyll. Seasons differ:
//                 even ones have a north-westward drift and a clockwise lagoon
//                 cell, odd ones a south-westward drift, a weaker
//                 counter-clockwise cell and other eddies; each season has its
//                 own day-to-day weather.
// Velocities are packed as int16 (scale_factor/add_offset, CF-1.13 §8.1) with a
// _FillValue on land; time is "hours since <start>", standard calendar.
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/base/civil_time.hpp"

namespace cullcast::currents {

enum class SyntheticKind { demo, uniform, eddy, double_gyre };

// "demo", "uniform", "eddy", "double-gyre"; throws std::invalid_argument otherwise.
SyntheticKind synthetic_kind_from_name(const std::string& name);
std::string synthetic_kind_name(SyntheticKind kind);

struct SyntheticOptions {
  SyntheticKind kind = SyntheticKind::demo;
  double days = 50;             // length of the record, days
  double days_per_file = 10;    // one file per this many days
  double step_hours = 1;        // frame spacing, hours
  CivilTime start = {2026, 12, 1, 0, 0, 0};  // first frame, UTC
  double lon_min = 150.0, lon_max = 150.6;   // degrees east (double-gyre: lon_max set from the 2:1 aspect)
  double lat_min = -20.4, lat_max = -20.0;   // degrees north
  double spacing_deg = 0.01;    // node spacing (~1 km), degrees
  bool compress = true;         // NetCDF-4 classic model + deflate; false: 64-bit-offset classic
  std::string file_prefix;      // default: the kind's name
  int season = 0;               // demo weather of the first window (0 = the 2026 season's)
  int seasons = 1;              // windows of `days` each, starting 0, 1, ... calendar years after
                                // `start` (season, season + 1, ...): a record with gaps between seasons
};

// Writes the files into `dir` (created if needed), each atomically; returns their paths.
std::vector<std::filesystem::path> write_synthetic_currents(const std::filesystem::path& dir,
                                                            const SyntheticOptions& options);

}  // namespace cullcast::currents
