#pragma once
// A small invented briefing: four reefs in an invented bay, two events, a land
// grid with one island, a two-site cull plan. One reef carries a hostile name.
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "cullcast/report/briefing.hpp"

namespace report_test {

inline cullcast::reefs::Reef square_reef(const std::string& id, const std::string& name, double lon, double lat,
                                         double priority) {
  cullcast::reefs::Reef r;
  r.id = id;
  r.name = name;
  r.priority = priority;
  const double h = 0.004;  // half side, degrees
  r.parts.push_back({{{lon - h, lat - h}, {lon + h, lat - h}, {lon + h, lat + h}, {lon - h, lat + h}, {lon - h, lat - h}}, {}});
  r.centroid = {lon, lat};
  r.lon_min = lon - h;
  r.lon_max = lon + h;
  r.lat_min = lat - h;
  r.lat_max = lat + h;
  r.area_ha = 7000;  // only used as a divisor here
  return r;
}

inline cullcast::report::BriefingData sample_briefing() {
  using namespace cullcast::report;
  BriefingData d;
  d.title = "Invented bay <b>test</b>";
  d.description = "An invented region & no real place.";
  d.version = "0.1.0";
  d.generated_utc = "2026-01-01T00:00:00Z";
  d.seed = 7;
  d.scenario_text = "[study]\nname = \"Invented bay <b>test</b>\"\n";
  d.event_labels = {"night 1", "night 2"};
  d.reefs = {square_reef("A-1", "Gull Reef", 150.05, -20.05, 0.0),
             square_reef("A-2", "<script>alert(1)</script>", 150.20, -20.10, 0.9),
             square_reef("A-3", "Tern Shoal", 150.12, -20.25, 0.0),
             square_reef("A-4", "Heron Patch", 150.30, -20.30, 0.8)};
  d.results = {{"source", 100, 0.1, 0.5, 0.3, 20, 2, 0.01, 1.0},
               {"sink", 10, 0.05, 0.2, 0.1, 1, 30, 0.03, 2.0},
               {"exchange", 50, 0.02, 0.3, 0.2, 8, 7, 0.02, 1.5},
               {"isolated", 0, 0, std::nan(""), 0, 0, 0, 0, 0}};
  d.links = {{0, 1, 0.02, 0.005, 0.015, 0.025}, {2, 1, 0.01, 0.002, 0.008, 0.012}, {0, 2, 0.004, 0.001, 0.003, 0.005},
             {0, 0, 0.1, 0.01, 0.09, 0.11}};
  d.matrix.assign(4, std::vector<double>(4, 0.0));
  for (const auto& l : d.links) d.matrix[l.from][l.to] = l.mean;
  d.aggregations = {{"AGG-1", 150.051, -20.049, 35, 0}};
  d.land.nx = 41;
  d.land.ny = 31;
  d.land.lon0 = 150.0;
  d.land.lat0 = -20.4;
  d.land.dlon = 0.01;
  d.land.dlat = 0.01;
  d.land.land.assign(d.land.nx * d.land.ny, 0);
  for (std::size_t j = 12; j < 16; ++j) {
    for (std::size_t i = 2; i < 6; ++i) d.land.land[j * d.land.nx + i] = 1;  // an island
  }
  d.cull_present = true;
  d.ranking = {{1, "A-1", 0, 2.0, 30.0, 30.0, 500, 300, 1.0, false, "Its larvae settle on <i>A-2</i>."},
               {2, "A-3", 2, 1.0, 10.0, 40.0, 200, 20, 0.5, true, "Mostly one night."}};
  d.curve = {{0, 0, 0, 0}, {1, 18, 1, 1}, {2, 30, 2, 1}, {3, 40, 3, 2}};
  return d;
}

inline std::string run_capture(const std::string& cmd, int* status = nullptr) {
  std::string out;
  FILE* p = ::popen((cmd + " 2>&1").c_str(), "r");
  if (p == nullptr) return out;
  char buf[4096];
  std::size_t n;
  while ((n = std::fread(buf, 1, sizeof buf, p)) > 0) out.append(buf, n);
  const int rc = ::pclose(p);
  if (status != nullptr) *status = WEXITSTATUS(rc);
  return out;
}

inline std::string read_all(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

}  // namespace report_test
