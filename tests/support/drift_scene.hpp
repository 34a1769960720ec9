#pragma once
// For drift tests on the grid of uniform_currents.hpp: the test reefs as a
// GeoJSON layer, a scenario for them, and the drift stage run on the
// scenario's own files.
#include <string>
#include <vector>

#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/drift_run.hpp"
#include "cullcast/reefs/reef_set.hpp"
#include "cullcast/reefs/release_plan.hpp"
#include "cullcast/study/load_study.hpp"

namespace cullcast::test {

// GeoJSON features with properties id, name and priority. WEST spans
// 150.05..150.07°E, MID 150.12..150.14°E, EAST 150.25..150.27°E; EAST
// spans the latitudes of WEST when `aligned` (every eastward path from WEST
// crosses it), 20.15..20.05°S otherwise.
inline const std::string kWestReef = R"({"type":"Feature","properties":{"id":"WEST","name":"West Test Reef","priority":0.2},
 "geometry":{"type":"Polygon","coordinates":[[[150.05,-20.12],[150.07,-20.12],[150.07,-20.08],[150.05,-20.08],[150.05,-20.12]]]}})";
inline const std::string kMidReef = R"({"type":"Feature","properties":{"id":"MID","name":"Middle Test Reef","priority":0.5},
 "geometry":{"type":"Polygon","coordinates":[[[150.12,-20.11],[150.14,-20.11],[150.14,-20.09],[150.12,-20.09],[150.12,-20.11]]]}})";
inline std::string east_reef(bool aligned) {
  const std::string lo = aligned ? "-20.12" : "-20.15", hi = aligned ? "-20.08" : "-20.05";
  return R"({"type":"Feature","properties":{"id":"EAST","name":"East Test Reef","priority":0.9},
 "geometry":{"type":"Polygon","coordinates":[[[150.25,)" + lo + "],[150.27," + lo + "],[150.27," + hi + "],[150.25," + hi +
         "],[150.25," + lo + "]]]}}";
}

inline std::string reef_layer(const std::vector<std::string>& features) {
  std::string text = "{\"type\":\"FeatureCollection\",\"features\":[\n";
  for (std::size_t i = 0; i < features.size(); ++i) text += (i ? ",\n" : "") + features[i];
  return text + "\n]}";
}

// A scenario (TOML) for the reefs above: one spawning at 2026-12-01T06:00Z of
// 200 larvae per reef, competent after 1 day for 3 days, no mortality,
// 15-minute steps. The strings add keys to their tables; `tail` follows the
// [outputs] dir key (more [outputs] keys, then other tables).
struct ScenarioSpec {
  std::string name;
  int seed = 1;
  std::string currents;  // the currents file, relative to the scenario
  std::string spawning, larvae, motion;
  std::string out = "out";
  std::string tail;
};

inline std::string scenario_text(const ScenarioSpec& s) {
  return R"([study]
name = ")" + s.name + R"("
seed = )" + std::to_string(s.seed) + R"(
[currents]
files = [")" + s.currents + R"("]
[reefs]
layer = "reefs.geojson"
name = "name"
priority = "priority"
[[spawning]]
start = "2026-12-01T06:00:00Z"
hours = 0
larvae_per_reef = 200
)" + s.spawning + R"([larvae]
precompetent_days = 1.0
competent_days = 3.0
mortality_per_day = 0.0
)" + s.larvae + R"([motion]
dt_minutes = 15
)" + s.motion + R"([outputs]
dir = ")" + s.out + R"("
)" + s.tail;
}

// run_drift on the study's currents and reef layer, releasing from its sources.
inline drift::DriftSummary run_drift_from_files(const study::Study& s) {
  currents::CurrentField field = currents::CurrentField::open(s.currents);
  const auto reef_set = reefs::ReefSet::load(s.reefs);
  const auto sources = reefs::release_sources(reef_set, s);
  return drift::run_drift(s, field, reef_set, sources);
}

}  // namespace cullcast::test
