// Tracks as CF-1.13 trajectories (chapter 9; appendix H.4.3 contiguous ragged
// array): structural attributes checked with `ncdump -h` (netcdf-bin) and the
// data read back with Debian's python3-netCDF4, against the analytic track of
// a uniform current.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "analytic_flow.hpp"
#include "cullcast/drift/drift_step.hpp"
#include "cullcast/drift/track_writer.hpp"

using namespace cullcast;
using namespace cullcast::drift;
using Catch::Matchers::Contains;
namespace fs = std::filesystem;

namespace {

std::string run_command(const std::string& cmd, int& status) {
  std::string out;
  FILE* pipe = ::popen((cmd + " 2>&1").c_str(), "r");
  if (pipe == nullptr) return "popen failed";
  char buffer[4096];
  while (std::fgets(buffer, sizeof buffer, pipe) != nullptr) out += buffer;
  status = ::pclose(pipe);
  return out;
}

}  // namespace

TEST_CASE("tracks: CF trajectory file, contiguous ragged array, read back by ncdump and netCDF4") {
  const fs::path dir = fs::temp_directory_path() / ("cullcast-tracks-" + std::to_string(::getpid()));
  fs::remove_all(dir);
  fs::create_directories(dir);
  const fs::path file = dir / "tracks.nc";

  // 40 particles of 2 sources in a uniform eastward current of 0.5 m/s;
  // every 4th particle, every 3rd step; source 1 released one hour late.
  ParticleSet p;
  p.resize(40);
  for (std::size_t i = 0; i < 40; ++i) {
    p.lon[i] = 150.0;
    p.lat[i] = 0.0;
    p.source[i] = static_cast<std::uint32_t>(i / 20);
    p.index[i] = static_cast<std::uint32_t>(i % 20);
    p.release_s[i] = p.source[i] == 1 ? 3600.0f : 0.0f;
  }
  study::LarvaeSettings l;
  l.precompetent_days = 1;
  l.competent_days = 1;
  l.mortality_per_day = 0;
  const LarvalClock clock(l);
  const auto earth = EarthModel::sphere(6371000.0);
  const auto flow = test::make_flow([](double, double, double) { return std::array<double, 2>{0.5, 0.0}; });
  const test::BoxReef no_reef{{0, -1, 0, -1}, 0};
  const CounterRandom rng(1);
  StepSettings s;
  s.dt_s = 600;
  s.event_start_s = 1.0e9;
  std::vector<std::uint8_t> now;
  {
    TrackWriter tracks(file, {"A-1", "B-2"}, currents::Calendar::from_name("standard"), 4, 3);
    tracks.samples_per_pass = 7;  // several sorting passes
    tracks.begin_event(0, p);
    for (std::uint32_t k = 0; k < 30; ++k) {
      drift_step(p, k, s, clock, earth, flow, no_reef, rng, now);
      tracks.after_step(k, s.event_start_s + (k + 1) * s.dt_s, s.event_start_s, p);
    }
    CHECK(tracks.trajectories() == 10);
    // Samples after steps k with (k+1) % 3 == 0: k = 2, 5, ..., 29 (10) for
    // source 0; source 1 enters the water at step 6 (t0 = 3600 s): k = 8..29 (8).
    CHECK(tracks.samples() == 5 * 10 + 5 * 8);
    tracks.commit();
  }
  REQUIRE(fs::exists(file));

  // Structure with the reference tool ncdump (netcdf-bin): CF-1.13 §9.1
  // featureType, §9.5 cf_role = "trajectory_id", H.4.3 sample_dimension.
  int status = 0;
  const std::string header = run_command("ncdump -h '" + file.string() + "'", status);
  REQUIRE(status == 0);
  CHECK_THAT(header, Contains(":featureType = \"trajectory\""));
  CHECK_THAT(header, Contains("trajectory:cf_role = \"trajectory_id\""));
  CHECK_THAT(header, Contains("row_size:sample_dimension = \"obs\""));
  CHECK_THAT(header, Contains("time:calendar = \"standard\""));
  CHECK_THAT(header, Contains("depth:positive = \"down\""));

  // Data with python3-netCDF4: counts sum to obs; each trajectory's times
  // increase; positions follow x = x0 + U·(t − release) on the equator.
  const fs::path script = dir / "check.py";
  std::ofstream(script) << R"PY(
import sys, math, netCDF4
d = netCDF4.Dataset(sys.argv[1])
assert d.featureType == "trajectory"
rows = d["row_size"][:]
assert int(rows.sum()) == d.dimensions["obs"].size, "counts"
t, lon, src = d["time"][:], d["lon"][:], d["source"][:]
deg = 6371000.0 * math.pi / 180
start = 0
for k, n in enumerate(rows):
    seg = slice(start, start + int(n))
    times = t[seg]
    assert all(times[1:] > times[:-1]), "times increase"
    release = 1.0e9 + (3600.0 if src[k] == 1 else 0.0)
    for ti, xi in zip(times, lon[seg]):
        assert abs(xi - (150.0 + 0.5 * (ti - release) / deg)) < 1e-9, (k, ti, xi)
    start += int(n)
print("ok", len(rows), int(rows.sum()), d["source_id"][7])
)PY";
  const std::string result = run_command("/usr/bin/python3 '" + script.string() + "' '" + file.string() + "'", status);
  INFO(result);
  CHECK(status == 0);
  CHECK_THAT(result, Contains("ok 10 90 B-2"));
  fs::remove_all(dir);
}
