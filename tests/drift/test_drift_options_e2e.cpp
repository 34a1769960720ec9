// The drift engine's optional physics end to end on real files: CF-NetCDF
// currents written here with netCDF-C++ (with depth levels, temperature and
// chlorophyll where a case needs them), a GeoJSON reef layer read through
// GDAL, run_drift / run_backward / the `cullcast disperse` program, and the
// outputs (settlement.nc, tracks.nc, backward_origins.csv) read back.
#include <catch2/catch.hpp>

#include <omp.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <netcdf>
#include <optional>
#include <sstream>

#include "../support/drift_scene.hpp"
#include "../support/scratch_folder.hpp"
#include "../support/uniform_currents.hpp"
#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/drift_run.hpp"
#include "cullcast/drift/earth_model.hpp"
#include "cullcast/reefs/reef_set.hpp"
#include "cullcast/reefs/release_plan.hpp"
#include "cullcast/study/load_study.hpp"

namespace fs = std::filesystem;
using namespace cullcast;

namespace {

constexpr double kDt = 900;            // time step of every scenario here, seconds
constexpr double kR = 6371000.0;       // sphere radius of the default earth model, metres
constexpr double kPi = 3.14159265358979323846;

using test::CurrentsSpec;

struct Workspace : test::ScratchFolder {
  explicit Workspace(const std::string& tag) : ScratchFolder("drift-e2e-" + tag) { write_reefs(false); }

  // Two reefs 0.18° apart; `aligned`: both span the same latitudes.
  void write_reefs(bool aligned) const {
    std::ofstream(dir / "reefs.geojson") << test::reef_layer({test::kWestReef, test::east_reef(aligned)});
  }

  void write_currents(const CurrentsSpec& c) const { test::write_uniform_currents(dir, c); }

  // A scenario; `motion`, `larvae` are extra keys of those tables, `tail` extra tables.
  fs::path scenario(const std::string& currents, const std::string& motion = "", const std::string& larvae = "",
                    const std::string& tail = "", const std::string& spawning = "",
                    const std::string& file = "s.toml", const std::string& out = "out") const {
    test::ScenarioSpec spec;
    spec.name = "optional physics";
    spec.seed = 11;
    spec.currents = currents;
    spec.spawning = spawning;
    spec.larvae = larvae;
    spec.motion = motion;
    spec.out = out;
    spec.tail = tail;
    std::ofstream(dir / file) << test::scenario_text(spec);
    return dir / file;
  }
};

study::Study load(const fs::path& scenario, std::vector<std::string> overrides = {}) {
  study::LoadOptions o;
  o.overrides = std::move(overrides);
  return study::load_study(scenario, o);
}

// Runs a shell command; returns its exit status (0 = success).
int shell(const std::string& command) {
  const int rc = std::system(command.c_str());
  return rc == -1 ? -1 : WEXITSTATUS(rc);
}

// "key value" lines printed by a checking script.
std::map<std::string, double> key_values(const std::string& text) {
  std::map<std::string, double> out;
  std::istringstream in(text);
  std::string key;
  double value;
  while (in >> key >> value) out[key] = value;
  return out;
}

template <class T>
std::vector<T> read_all(const netCDF::NcFile& f, const std::string& name) {
  const netCDF::NcVar v = f.getVar(name);
  std::size_t n = 1;
  for (const auto& d : v.getDims()) n *= d.getSize();
  std::vector<T> out(n);
  if (n > 0) v.getVar(out.data());
  return out;
}

void check_conservation(const drift::SettlementData& data) {
  for (const auto& f : data.fates) {
    CHECK(f.released > 0);
    CHECK(f.released == f.settled + f.died + f.stranded + f.lost + f.drifting);
  }
}

void check_identical(const drift::SettlementData& a, const drift::SettlementData& b) {
  REQUIRE(a.records.size() == b.records.size());
  for (std::size_t i = 0; i < a.records.size(); ++i) {
    CHECK(a.records[i].source == b.records[i].source);
    CHECK(a.records[i].reef == b.records[i].reef);
    CHECK(a.records[i].release_time_s == b.records[i].release_time_s);
    CHECK(a.records[i].settle_time_s == b.records[i].settle_time_s);
    CHECK(a.records[i].weight == b.records[i].weight);
  }
  REQUIRE(a.fates.size() == b.fates.size());
  for (std::size_t k = 0; k < a.fates.size(); ++k) {
    CHECK(a.fates[k].settled == b.fates[k].settled);
    CHECK(a.fates[k].died == b.fates[k].died);
    CHECK(a.fates[k].lost == b.fates[k].lost);
    CHECK(a.fates[k].drifting == b.fates[k].drifting);
    CHECK(a.fates[k].settled_weight == b.fates[k].settled_weight);
  }
}

// Checks tracks.nc with Debian's python3-netcdf4, independently of our reader.
const char* const kTrackScript = R"PY(
import math, sys
import netCDF4
path, event_start, u, k = sys.argv[1], float(sys.argv[2]), float(sys.argv[3]), int(sys.argv[4])
R = 6371000.0
d = netCDF4.Dataset(path)
print("feature_trajectory", int(d.getncattr("featureType") == "trajectory"))
print("conventions_cf", int(d.getncattr("Conventions").startswith("CF-")))
roles = [v for v in d.variables.values() if getattr(v, "cf_role", None) == "trajectory_id"]
print("trajectory_id_vars", len(roles))
counts = [v for v in d.variables.values() if getattr(v, "sample_dimension", None) is not None]
print("count_vars", len(counts))
rows = counts[0][:].astype(int)
obs = counts[0].getncattr("sample_dimension")
print("obs_matches", int(obs in d.dimensions and sum(rows) == len(d.dimensions[obs])))
print("trajectories", len(rows))
print("instance_dim_matches", int(counts[0].dimensions == roles[0].dimensions))
print("particle_multiple", int(all(p % k == 0 for p in d.variables["particle"][:])))
t = d.variables["time"][:]; lon = d.variables["lon"][:]; lat = d.variables["lat"][:]
print("time_units_ok", int(d.variables["time"].units.startswith("seconds since 1970-01-01")))
src = d.variables["source"][:]
start = 0; worst_x = 0.0; worst_y = 0.0; monotonic = 1; x0_min = [1e9, 1e9]; x0_max = [-1e9, -1e9]; checked = 0
for n, r in enumerate(rows):
    s = slice(start, start + r); start += r
    ts, xs, ys = t[s], lon[s], lat[s]
    if any(ts[i + 1] <= ts[i] for i in range(len(ts) - 1)): monotonic = 0
    for i in range(len(ts)):
        if xs[i] > 150.49: continue   # a particle leaving the grid: its last step met no current
        per_deg = R * math.cos(math.radians(ys[i])) * math.pi / 180.0
        x0 = xs[i] - u * (ts[i] - event_start) / per_deg
        x0_min[src[n]] = min(x0_min[src[n]], x0); x0_max[src[n]] = max(x0_max[src[n]], x0)
        worst_y = max(worst_y, abs(ys[i] - ys[0]))
        if i > 0: worst_x = max(worst_x, abs(x0 - (xs[0] - u * (ts[0] - event_start) / per_deg)))
        checked += 1
print("time_increasing", monotonic)
print("x0_spread_deg", worst_x)
print("lat_change_deg", worst_y)
print("x0_min_west", x0_min[0]); print("x0_max_west", x0_max[0])
print("x0_min_east", x0_min[1]); print("x0_max_east", x0_max[1])
print("checked", checked)
)PY";

}  // namespace

TEST_CASE("tracks section writes CF trajectories beside settlement.nc that follow x0 + U·t") {
  Workspace w("tracks");
  CurrentsSpec c;  // u = 0.1 m/s everywhere
  w.write_currents(c);
  const int k = 7;
  const study::Study s = load(w.scenario(c.name, "", "", "[tracks]\nevery_particle = 7\nevery_steps = 4\n"));
  const auto summary = test::run_drift_from_files(s);
  const fs::path tracks = s.outputs.dir / "tracks.nc";
  REQUIRE(summary.tracks_netcdf == tracks);
  REQUIRE(fs::exists(tracks));
  REQUIRE(fs::exists(s.outputs.dir / "settlement.nc"));
  // Every 7th particle of 200 per source: indices 0, 7, ..., 196 -> ceil(200/7) = 29 per source.
  const std::size_t expected = 2 * ((200 + k - 1) / k);
  CHECK(summary.track_count == expected);

  const auto data = drift::read_settlement_log(s.outputs.dir / "settlement.nc");
  const fs::path script = w.dir / "check_tracks.py";
  std::ofstream(script) << kTrackScript;
  std::ostringstream cmd;
  cmd.precision(17);
  // The file stores u as a 32-bit float: the velocity the particles meet is float(0.1).
  const double u_file = static_cast<double>(static_cast<float>(0.1));
  cmd << "/usr/bin/python3 " << script << " " << tracks << " " << data.tables.event_starts_s[0] << " " << u_file
      << " " << k
      << " > " << (w.dir / "tracks.txt") << " 2> " << (w.dir / "tracks.err");
  REQUIRE(shell(cmd.str()) == 0);
  INFO(test::read_all(w.dir / "tracks.err"));
  auto r = key_values(test::read_all(w.dir / "tracks.txt"));
  // CF-1.13 chapter 9 and appendix H.4.3 (contiguous ragged array):
  // featureType = "trajectory", one variable with cf_role = "trajectory_id",
  // a count variable with sample_dimension naming the obs dimension, whose
  // sum is the length of that dimension; the count variable lies on the
  // instance dimension.
  CHECK(r["feature_trajectory"] == 1);
  CHECK(r["conventions_cf"] == 1);
  CHECK(r["trajectory_id_vars"] == 1);
  CHECK(r["count_vars"] == 1);
  CHECK(r["obs_matches"] == 1);
  CHECK(r["instance_dim_matches"] == 1);
  CHECK(r["time_units_ok"] == 1);
  CHECK(r["trajectories"] == static_cast<double>(expected));
  CHECK(r["particle_multiple"] == 1);
  // CF-1.13 §9.1 / H.4: times increase along each trajectory.
  CHECK(r["time_increasing"] == 1);
  // Analytic [D]: in u = U, v = 0 on a sphere, lon(t) = x0 + U·t/(R cos φ · π/180),
  // lat constant (RK4 is exact for a constant rate). x0, recovered from every
  // sample, is one number per trajectory and lies inside the source reef.
  CHECK(r["checked"] > 1000);
  // Tolerance: the currents sampler interpolates in 32-bit floats
  // (flow_sampler.hpp), a relative error of order 1e-7 on displacements of
  // up to 0.45°: 5e-8° (about 5 mm). A wrong speed or time would be off by
  // whole steps (90 m = 8e-4°).
  CHECK(r["x0_spread_deg"] < 5e-8);
  CHECK(r["lat_change_deg"] < 1e-12);
  CHECK(r["x0_min_west"] >= 150.05 - 1e-9);
  CHECK(r["x0_max_west"] <= 150.07 + 1e-9);
  CHECK(r["x0_min_east"] >= 150.25 - 1e-9);
  CHECK(r["x0_max_east"] <= 150.27 + 1e-9);
  CHECK(r["x0_max_west"] - r["x0_min_west"] > 0.005);  // random placement really spreads them
}

TEST_CASE("backward section: in an eastward current traces arrivals on the east reef to the west reef") {
  Workspace w("backward");
  w.write_reefs(true);  // WEST and EAST span the same latitudes
  CurrentsSpec c;       // u = 0.1 m/s, 2026-12-01T00Z .. 12-06T00Z
  w.write_currents(c);
  const study::Study s = load(w.scenario(
      c.name, "", "", "[backward]\nsink = \"EAST\"\narrival = 2026-12-05T00:00:00Z\nlarvae = 300\n"));
  currents::CurrentField field = currents::CurrentField::open(s.currents);
  const auto reef_set = reefs::ReefSet::load(s.reefs);
  const fs::path out = drift::run_backward(s, field, reef_set);
  REQUIRE(out == s.outputs.dir / "backward_origins.csv");
  REQUIRE(fs::exists(out));
  std::ifstream in(out);
  std::string header, columns, line;
  std::getline(in, header);
  std::getline(in, columns);
  // The caveat of backward_drift.hpp / docs/methods.md travels with the numbers.
  CHECK(header.rfind("#", 0) == 0);
  CHECK(header.find("diffusion is not time-reversible") != std::string::npos);
  CHECK(columns == "reef_id,weight_s,share");
  std::vector<std::string> rows;
  while (std::getline(in, line)) rows.push_back(line);
  // Only WEST is upstream at an age inside the competency window [1, 4] days:
  // EAST is left behind within hours (younger than competency).
  REQUIRE(rows.size() == 1);
  std::istringstream fields(rows[0]);
  std::string id, weight_text, share_text;
  std::getline(fields, id, ',');
  std::getline(fields, weight_text, ',');
  std::getline(fields, share_text, ',');
  CHECK(id == "WEST");
  CHECK(std::stod(share_text) == Approx(1.0));
  // Analytic [D] (Kh = 0, no mortality): each particle spends the crossing time
  // of WEST, 0.02° of longitude at U = 0.1 m/s, over it; sampled at step ends
  // that is between floor and ceil of (crossing / dt) steps of dt each.
  const double crossing = 0.02 * kR * std::cos(20.1 * kPi / 180) * kPi / 180 / 0.1;
  const double per_particle = std::stod(weight_text) / 300.0;
  CHECK(per_particle >= std::floor(crossing / kDt) * kDt - 1e-6);
  CHECK(per_particle <= std::ceil(crossing / kDt) * kDt + 1e-6);
}

TEST_CASE("backward section: arrivals spread over the window trace back from their own arrival times") {
  // Eastward 0.1 m/s until day 5, still water after (frame 121 on). Arrivals
  // on EAST over 24 h from day 5.5: a larva arriving s after day 5.5 sat on
  // EAST for 0.5 d + s before the current (backwards) carries it west. With
  // precompetent = 0.5 d, EAST gains the part of that stay beyond 0.5 d (s)
  // plus the rest of its crossing of EAST once the current runs.
  Workspace w("window");
  w.write_reefs(true);
  CurrentsSpec c;
  c.hours = 192;
  c.u_until_hour = 120;
  w.write_currents(c);
  const study::Study s =
      load(w.scenario(c.name, "", "", "[backward]\nsink = \"EAST\"\narrival = 2026-12-06T12:00:00Z\nhours = 24\nlarvae = 300\n"),
           {"larvae.precompetent_days=0.5", "larvae.competent_days=3.5"});
  currents::CurrentField field = currents::CurrentField::open(s.currents);
  const auto reef_set = reefs::ReefSet::load(s.reefs);
  const fs::path out = drift::run_backward(s, field, reef_set);
  std::ifstream in(out);
  std::string line;
  std::map<std::string, double> weight;
  while (std::getline(in, line)) {
    if (line.empty() || line[0] == '#' || line.rfind("reef_id", 0) == 0) continue;
    const auto a = line.find(','), b = line.find(',', a + 1);
    weight[line.substr(0, a)] = std::stod(line.substr(a + 1, b - a - 1));
  }
  CHECK(weight.count("WEST") == 1);
  REQUIRE(weight.count("EAST") == 1);
  // [D] Mean per particle: s averages 12 h (arrivals spread evenly), the
  // remaining crossing of EAST averages half its 0.02° at 0.1 m/s. Tolerance:
  // the hour-long ramp of u between frames 120 and 121 (time-linear
  // interpolation) plus a step, and the random placement (sd ≈ 350 s for 300).
  // All arrivals at once (the window ignored) would give about 10 400 s.
  const double crossing = 0.02 * kR * std::cos(20.1 * kPi / 180) * kPi / 180 / 0.1;
  const double expected = 12 * 3600.0 + crossing / 2;
  CHECK(weight["EAST"] / 300 == Approx(expected).margin(3600 + kDt));
}

TEST_CASE("depth modes on a 3-D currents file: interpolated speed, band and water column kept, fates conserved") {
  Workspace w("depth");
  CurrentsSpec c;
  c.hours = 168;  // 7 days: 5-day larval life from 06:00
  c.depths = {0.0, 20.0};
  c.u_m_s = {0.1, 0.0};  // u = 0.1 m/s at the surface, still at 20 m
  w.write_currents(c);
  const std::string spawning = "depth_m = 10\n";  // release (and fixed drift) depth

  SECTION("fixed depth 10 m drifts at the linearly interpolated 0.05 m/s") {
    const study::Study s = load(w.scenario(c.name, "depth = \"fixed\"\n", "", "", spawning),
                                {"larvae.competent_days=4"});
    test::run_drift_from_files(s);
    const auto data = drift::read_settlement_log(s.outputs.dir / "settlement.nc");
    check_conservation(data);
    REQUIRE(data.fates.size() == 2);
    CHECK(data.fates[0].settled == 200);
    REQUIRE(data.records.size() == 200);
    // Analytic [D]: u(10 m) = (0.1 + 0)/2 = 0.05 m/s (linear between levels);
    // WEST (150.05..150.07) to EAST (150.25) takes 0.18..0.20° / 0.05 m/s;
    // settlement at the end of the step reaching EAST.
    const double per_deg = kR * std::cos(20.1 * kPi / 180) * kPi / 180;
    const double t_min = 0.18 * per_deg / 0.05, t_max = 0.20 * per_deg / 0.05;
    for (const auto& rec : data.records) {
      CHECK(rec.source == 0);
      CHECK(rec.reef == 1);
      CHECK(rec.age_s >= std::floor(t_min / kDt) * kDt);
      CHECK(rec.age_s <= std::ceil(t_max / kDt) * kDt + 1e-6);
    }
  }

  SECTION("band: every tracked depth stays inside the band") {
    const study::Study s =
        load(w.scenario(c.name, "depth = \"band\"\nband_top_m = 5\nband_bottom_m = 15\nkv_m2_s = 0.01\n", "",
                        "[tracks]\nevery_particle = 5\nevery_steps = 1\n", spawning),
             {"larvae.competent_days=4"});
    const auto summary = test::run_drift_from_files(s);
    CHECK(summary.physics.find("depth band") != std::string::npos);
    check_conservation(drift::read_settlement_log(s.outputs.dir / "settlement.nc"));
    netCDF::NcFile f((s.outputs.dir / "tracks.nc").string(), netCDF::NcFile::read);
    const auto depth = read_all<float>(f, "depth");
    REQUIRE(depth.size() > 10000);
    const auto [lo, hi] = std::minmax_element(depth.begin(), depth.end());
    CHECK(*lo >= 5.0f);
    CHECK(*hi <= 15.0f);
    // A vertical walk of sd sqrt(2·Kv·dt) = 4.2 m per step really fills the band.
    CHECK(*lo < 6.0f);
    CHECK(*hi > 14.0f);
  }

  SECTION("3-D: every tracked depth stays between the surface and the sea floor") {
    const study::Study s = load(w.scenario(c.name, "depth = \"3d\"\nkv_m2_s = 0.01\n", "",
                                           "[tracks]\nevery_particle = 5\nevery_steps = 1\n", spawning),
                                {"larvae.competent_days=4"});
    const auto summary = test::run_drift_from_files(s);
    CHECK(summary.physics.find("depth 3d") != std::string::npos);
    check_conservation(drift::read_settlement_log(s.outputs.dir / "settlement.nc"));
    netCDF::NcFile f((s.outputs.dir / "tracks.nc").string(), netCDF::NcFile::read);
    const auto depth = read_all<float>(f, "depth");
    REQUIRE(depth.size() > 10000);
    const auto [lo, hi] = std::minmax_element(depth.begin(), depth.end());
    // Sea floor = deepest wet level = 20 m (gridded_field.hpp).
    CHECK(*lo >= 0.0f);
    CHECK(*hi <= 20.0f);
    CHECK(*lo < 1.0f);
    CHECK(*hi > 19.0f);
  }
}

TEST_CASE("temperature in the currents shifts settlement ages as the Q10 form of Uthicke et al. (2015) predicts") {
  // Still water, Kh = 0: larvae sit on their release reef and settle on it at
  // the first step end at which their development age reaches competency.
  Workspace w("temperature");
  const double P = 86400.0;  // precompetent_days = 1
  auto first_settlement_age = [&](std::optional<double> temperature_c, const std::string& name) {
    CurrentsSpec c;
    c.name = name + ".nc";
    c.u_m_s = {0.0};
    c.temperature_c = temperature_c;
    w.write_currents(c);
    const study::Study s = load(w.scenario(c.name, "", "", "", "", name + ".toml", name));
    const auto summary = test::run_drift_from_files(s);
    const auto data = drift::read_settlement_log(s.outputs.dir / "settlement.nc");
    check_conservation(data);
    REQUIRE(data.records.size() == 400);  // both reefs settle on themselves
    double lo = 1e300, hi = 0;
    for (const auto& r : data.records) {
      lo = std::min(lo, r.age_s);
      hi = std::max(hi, r.age_s);
    }
    CHECK(lo == hi);  // one temperature, one release time: one settlement step
    return std::make_pair(lo, summary.physics);
  };
  const auto [core, core_physics] = first_settlement_age(std::nullopt, "none");
  const auto [warm, warm_physics] = first_settlement_age(30.0, "warm");
  const auto [cool, cool_physics] = first_settlement_age(26.0, "cool");
  CHECK(core_physics.find("temperature") == std::string::npos);
  CHECK(warm_physics.find("temperature-dependent development") != std::string::npos);
  // Core: settles at the step end reaching 1 day.
  CHECK(core == std::ceil(P / kDt - 1e-9) * kDt);
  // Development rate r(T) = Q10^((T − 28)/10), Q10 = 5.95 (the defaults;
  // larval_environment.hpp derives Q10 = (1/0.7)^5 from Uthicke et al. 2015,
  // Sci. Rep. 5:8402: +2 °C shortens development by about 30 %).
  auto expected = [&](double t_c) {
    const double rate = std::pow(5.95, (t_c - 28.0) / 10.0);
    return std::ceil(P / (rate * kDt)) * kDt;
  };
  CHECK(warm == expected(30.0));
  CHECK(cool == expected(26.0));
  // The published point (Uthicke et al. 2015): +2 °C -> ≈ 0.7 of the duration,
  // within one step of the 1-day precompetent period.
  CHECK(warm / core == Approx(0.7).margin(kDt / P));
  CHECK(core / cool == Approx(0.7).margin(kDt / P));
}

TEST_CASE("chlorophyll in the currents scales settler weights as Fabricius et al. (2010) relate") {
  Workspace w("food");
  auto settler_weight = [&](double chl_mg_m3, const std::string& name) {
    CurrentsSpec c;
    c.name = name + ".nc";
    c.u_m_s = {0.0};
    c.chlorophyll_mg_m3 = chl_mg_m3;
    w.write_currents(c);
    const study::Study s = load(w.scenario(c.name, "", "", "", "", name + ".toml", name));
    const auto summary = test::run_drift_from_files(s);
    CHECK(summary.physics.find("food-dependent completion") != std::string::npos);
    const auto data = drift::read_settlement_log(s.outputs.dir / "settlement.nc");
    check_conservation(data);
    REQUIRE(data.records.size() == 400);
    const double wgt = data.records.front().weight;
    for (const auto& r : data.records) CHECK(r.weight == Approx(wgt).epsilon(1e-12));
    // Food does not change timing: settlement at 1 day as in the core path.
    CHECK(data.records.front().age_s == 86400.0);
    return wgt;
  };
  const double w_quarter = settler_weight(0.75, "chl075");
  const double w_half = settler_weight(1.5, "chl150");
  const double w_sat = settler_weight(6.0, "chl600");
  auto odds = [](double p) { return p / (1 - p); };
  // Fabricius, Okaji & De'ath (2010), Coral Reefs 29:593–605: the odds of
  // completing development rise about 8-fold per doubling of chlorophyll up
  // to about 3 µg/L (the defaults food_odds_per_doubling = 8, saturation 3).
  CHECK(odds(w_half) / odds(w_quarter) == Approx(8.0).epsilon(1e-5));
  // Above saturation food no longer helps: completion_at_saturation (0.9,
  // an assumption), and 1.5 -> 3 mg m-3 is one more doubling (odds × 8).
  CHECK(w_sat == Approx(0.9).epsilon(1e-6));
  CHECK(odds(w_sat) / odds(w_half) == Approx(8.0).epsilon(1e-5));
  // [D] 0.75 mg m-3 is two doublings below saturation: odds 9/64, p = 9/73.
  CHECK(w_quarter == Approx(9.0 / 73.0).epsilon(1e-5));
}

TEST_CASE("without temperature/chlorophyll, or at the reference temperature, results equal the core path bit for bit") {
  Workspace w("core");
  CurrentsSpec plain;  // u = 0.1 m/s, no scalar fields
  plain.name = "plain.nc";
  w.write_currents(plain);
  CurrentsSpec at_ref = plain;  // 28 °C = reference_temperature_c: development rate exactly 1
  at_ref.name = "ref.nc";
  at_ref.temperature_c = 28.0;
  at_ref.temperature_degc = true;
  w.write_currents(at_ref);
  const std::vector<std::string> noise = {"motion.kh_m2_s=5", "larvae.mortality_per_day=0.2",
                                          "larvae.settle_rate_per_day=4", "spawning.hours=6"};
  auto records = [&](const std::string& currents, const std::string& larvae, const std::string& name,
                     std::string& physics) {
    const study::Study s = load(w.scenario(currents, "", larvae, "", "", name + ".toml", name), noise);
    physics = test::run_drift_from_files(s).physics;
    return drift::read_settlement_log(s.outputs.dir / "settlement.nc");
  };
  std::string p_core, p_auto, p_ref, p_off;
  const auto core = records("plain.nc", "temperature_effect = \"off\"\nfood_effect = \"off\"\n", "core", p_core);
  const auto automatic = records("plain.nc", "", "auto", p_auto);
  const auto reference = records("ref.nc", "", "ref", p_ref);
  const auto off = records("ref.nc", "temperature_effect = \"off\"\n", "off", p_off);
  REQUIRE(!core.records.empty());
  check_conservation(core);
  CHECK(p_auto == p_core);
  CHECK(p_ref.find("temperature-dependent development") != std::string::npos);  // the optional path ran
  CHECK(p_off == p_core);
  check_identical(core, automatic);
  check_identical(core, reference);
  check_identical(core, off);
}

TEST_CASE("optional physics on: settlement records and tracks are bit-identical for 1 and 2 threads", "[slow]") {
  Workspace w("threads");
  CurrentsSpec c;
  c.hours = 144;
  c.depths = {0.0, 10.0, 30.0};
  c.u_m_s = {0.12, 0.08, 0.0};
  c.temperature_c = 29.0;
  c.chlorophyll_mg_m3 = 1.0;
  w.write_currents(c);
  // More than 4096 particles, so the step's parallel loop really splits.
  const std::vector<std::string> o = {"spawning.larvae_per_reef=2500", "spawning.hours=6",
                                      "motion.kh_m2_s=10", "larvae.mortality_as=random",
                                      "larvae.mortality_per_day=0.2", "larvae.settle_rate_per_day=3"};
  struct Result {
    drift::SettlementData data;
    std::vector<double> lon, lat;
    std::vector<float> depth;
    std::string physics;
  };
  auto with_threads = [&](int threads, const std::string& depth_mode) {
    omp_set_num_threads(threads);
    const std::string name = depth_mode + std::to_string(threads);
    const study::Study s = load(w.scenario(c.name, "depth = \"" + depth_mode + "\"\nkv_m2_s = 0.005\n", "",
                                           "[tracks]\nevery_particle = 50\nevery_steps = 3\n", "",
                                           name + ".toml", name),
                                o);
    Result r;
    r.physics = test::run_drift_from_files(s).physics;
    r.data = drift::read_settlement_log(s.outputs.dir / "settlement.nc");
    netCDF::NcFile f((s.outputs.dir / "tracks.nc").string(), netCDF::NcFile::read);
    r.lon = read_all<double>(f, "lon");
    r.lat = read_all<double>(f, "lat");
    r.depth = read_all<float>(f, "depth");
    return r;
  };
  for (const std::string mode : {"band", "3d"}) {
    const Result a = with_threads(1, mode);
    const Result b = with_threads(2, mode);
    omp_set_num_threads(omp_get_num_procs());
    INFO("depth mode " << mode << ", physics:" << a.physics);
    CHECK(a.physics.find("temperature-dependent development") != std::string::npos);
    CHECK(a.physics.find("food-dependent completion") != std::string::npos);
    REQUIRE(!a.data.records.empty());
    check_conservation(a.data);
    check_identical(a.data, b.data);
    REQUIRE(a.lon.size() == b.lon.size());
    CHECK(a.lon == b.lon);
    CHECK(a.lat == b.lat);
    CHECK(a.depth == b.depth);
  }
}

TEST_CASE("backward origins are identical for 1 and 2 threads with enough particles to split the loop", "[slow]") {
  Workspace w("backthreads");
  CurrentsSpec c;
  w.write_currents(c);
  auto origins = [&](int threads) {
    omp_set_num_threads(threads);
    const std::string name = "t" + std::to_string(threads);
    const study::Study s = load(w.scenario(c.name, "kh_m2_s = 20\n", "", "[backward]\nsink = \"EAST\"\n"
                                           "arrival = 2026-12-05T00:00:00Z\nhours = 3\nlarvae = 5000\n",
                                           "", name + ".toml", name));
    currents::CurrentField field = currents::CurrentField::open(s.currents);
    return test::read_all(drift::run_backward(s, field, reefs::ReefSet::load(s.reefs)));
  };
  const std::string a = origins(1), b = origins(2);
  omp_set_num_threads(omp_get_num_procs());
  CHECK(a.find("WEST,") != std::string::npos);
  CHECK(a == b);
}

TEST_CASE("cullcast disperse prints where it wrote tracks and backward origins") {
  const fs::path exe = CULLCAST_EXE;
  REQUIRE(fs::exists(exe));  // build the `cullcast` target before test_drift
  Workspace w("cli");
  CurrentsSpec c;
  w.write_currents(c);
  const fs::path scenario =
      w.scenario(c.name, "", "", "[tracks]\nevery_particle = 20\n[backward]\nsink = \"EAST\"\n"
                                 "arrival = 2026-12-05T00:00:00Z\nlarvae = 50\n");
  const fs::path out = w.dir / "stdout.txt", err = w.dir / "stderr.txt";
  const int rc = shell(exe.string() + " disperse " + scenario.string() + " > " + out.string() + " 2> " +
                       err.string());
  const std::string text = test::read_all(out);
  INFO("stdout:\n" << text << "\nstderr:\n" << test::read_all(err));
  REQUIRE(rc == 0);
  auto printed_path = [&](const std::string& label) -> fs::path {
    const auto at = text.find("  " + label + ": ");
    if (at == std::string::npos) return {};
    const auto from = at + label.size() + 4;
    const auto end = text.find_first_of(" \n", from);
    return text.substr(from, end - from);
  };
  const fs::path tracks = printed_path("tracks"), origins = printed_path("backward origins");
  REQUIRE(!tracks.empty());
  REQUIRE(!origins.empty());
  CHECK(fs::exists(tracks));
  CHECK(fs::exists(origins));
  CHECK(fs::equivalent(tracks, w.dir / "out" / "tracks.nc"));
  CHECK(fs::equivalent(origins, w.dir / "out" / "backward_origins.csv"));
  CHECK(text.find("trajectories") != std::string::npos);
}

TEST_CASE("cullcast connect puts the backward origins beside the matrix attribution") {
  const fs::path exe = CULLCAST_EXE;
  REQUIRE(fs::exists(exe));
  Workspace w("origins-compared");
  w.write_reefs(true);  // WEST upstream of EAST in the eastward current
  CurrentsSpec c;
  w.write_currents(c);
  const fs::path scenario =
      w.scenario(c.name, "", "", "[backward]\nsink = \"EAST\"\narrival = 2026-12-05T00:00:00Z\nlarvae = 100\n");
  const fs::path out = w.dir / "stdout.txt", err = w.dir / "stderr.txt";
  const int rc = shell(exe.string() + " disperse " + scenario.string() + " > " + out.string() + " 2> " +
                       err.string() + " && " + exe.string() + " connect " + scenario.string() + " >> " +
                       out.string() + " 2>> " + err.string());
  const std::string text = test::read_all(out);
  INFO("stdout:\n" << text << "\nstderr:\n" << test::read_all(err));
  REQUIRE(rc == 0);
  const std::string csv = test::read_all(w.dir / "out" / "origins_compared.csv");
  CHECK(csv.rfind("sink_reef_id,origin_id,matrix_share,matrix_event_min,matrix_event_max,backward_share\n", 0) == 0);
  // Both methods name WEST as the only origin of EAST's settlers here: shares 1 and 1.
  CHECK(csv.find("\nEAST,WEST,1,1,1,1\n") != std::string::npos);
  CHECK(csv.find("total variation distance between the two share lists: 0 ") != std::string::npos);
  CHECK(text.find("matrix attribution vs backward drift") != std::string::npos);
}
