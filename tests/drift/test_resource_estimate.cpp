// Memory and disk estimate of a drift run (drift/resource_estimate.hpp),
// checked against the real structures it predicts: the capacity of a
// ParticleSet's arrays, and the bytes a CurrentField really holds after
// prepare() on real CF-NetCDF files (written by the synthetic-currents writer).
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>
#include <fstream>

#include "cullcast/base/error.hpp"
#include "cullcast/currents/current_field.hpp"
#include "cullcast/currents/synthetic_currents.hpp"
#include "cullcast/drift/particles.hpp"
#include "cullcast/drift/resource_estimate.hpp"
#include "cullcast/study/load_study.hpp"

namespace fs = std::filesystem;
using namespace cullcast;
using Catch::Matchers::Contains;

namespace {

struct Setup {
  fs::path dir = fs::temp_directory_path() / ("cullcast-estimate-" + std::to_string(::getpid()));
  Setup() {
    fs::remove_all(dir);
    currents::SyntheticOptions o;
    o.kind = currents::SyntheticKind::uniform;
    o.days = 2;
    o.days_per_file = 2;
    write_synthetic_currents(dir / "currents", o);
    std::ofstream(dir / "reefs.geojson") << "{}";
  }
  ~Setup() {
    std::error_code ignored;
    fs::remove_all(dir, ignored);
  }
  study::Study study(const std::string& extra) const {
    study::LoadOptions options;
    options.check_files = true;
    return study::load_study_text(R"([currents]
files = ["currents/*.nc"]
[reefs]
layer = "reefs.geojson"
[[spawning]]
start = "2026-12-01T02:00:00Z"
larvae_per_reef = 200
[[spawning]]
start = "2026-12-01T04:00:00Z"
larvae_per_reef = 500
[larvae]
precompetent_days = 0.2
competent_days = 0.5
)" + extra,
                                  dir / "s.toml", options);
  }
};

std::vector<reefs::ReleaseSource> sources(int n) {
  std::vector<reefs::ReleaseSource> out(static_cast<std::size_t>(n));
  for (int i = 0; i < n; ++i) out[static_cast<std::size_t>(i)].id = "TR-" + std::to_string(i);
  return out;
}

}  // namespace

TEST_CASE("the memory estimate follows particles and frames of the real structures") {
  const Setup setup;
  const study::Study s = setup.study("");
  currents::CurrentField field = currents::CurrentField::open(s.currents);
  const reefs::ReefSet reef_set;
  const auto e = drift::estimate_resources(s, field, reef_set, sources(7));

  // The largest event: 7 sources x 500 larvae.
  CHECK(e.particles == 7u * 500u);
  CHECK(e.particle_bytes == e.particles * e.bytes_per_particle);
  // A real ParticleSet of that size holds exactly bytes_per_particle per
  // particle in its arrays; the estimate adds the release plan and scratch.
  drift::ParticleSet p;
  p.resize(e.particles);
  const std::size_t held = p.lon.capacity() * sizeof(double) + p.lat.capacity() * sizeof(double) +
                           p.depth_m.capacity() * sizeof(float) + p.release_s.capacity() * sizeof(float) +
                           p.weight.capacity() * sizeof(double) + p.source.capacity() * 4 +
                           p.index.capacity() * 4 + p.fate.capacity() + p.reef.capacity() * 4;
  CHECK(held == e.particles * drift::ParticleSet::bytes_per_particle);
  CHECK(e.bytes_per_particle > drift::ParticleSet::bytes_per_particle);

  // Frames: the bytes the field really holds after stepping through a few
  // hours stay within the estimate, and the estimate is not wildly above.
  const auto& g = field.grid();
  CHECK(e.grid_nodes == g.nx * g.ny * g.nz);
  std::size_t most = 0;
  for (int k = 0; k < 6; ++k) {
    const double t = field.time_begin_s() + k * 1800.0;
    field.prepare(t, t + 1800.0);
    most = std::max(most, field.frame_bytes());
  }
  CHECK(most > 0);
  CHECK(most <= e.frame_bytes);
  CHECK(most * 4 >= e.frame_bytes);
  CHECK(e.memory_bytes == e.baseline_bytes + e.particle_bytes + e.frame_bytes);
}

TEST_CASE("the estimate scales with larvae, read-ahead, CSV records and tracks") {
  const Setup setup;
  const currents::CurrentField field = currents::CurrentField::open(setup.study("").currents);
  const reefs::ReefSet reef_set;
  const auto base = drift::estimate_resources(setup.study(""), field, reef_set, sources(3));
  const auto doubled =
      drift::estimate_resources(setup.study(""), field, reef_set, sources(6));
  CHECK(doubled.particle_bytes == 2 * base.particle_bytes);
  // Each particle settles at most once: records over all events.
  CHECK(base.records_max == 3u * (200u + 500u));
  CHECK(doubled.records_max == 2 * base.records_max);

  study::Study ahead = setup.study("");
  ahead.currents.frames_ahead = 3;
  const auto more = drift::estimate_resources(ahead, field, reef_set, sources(3));
  CHECK(more.frames_in_memory == base.frames_in_memory + 2);
  CHECK(more.frame_bytes > base.frame_bytes);

  const auto csv = drift::estimate_resources(setup.study("[outputs]\nsettlement_csv = true\n"), field, reef_set,
                                             sources(3));
  CHECK(csv.settlement_bytes > base.settlement_bytes);
  CHECK(base.track_bytes == 0);
  const auto tracks = drift::estimate_resources(setup.study("[tracks]\nenabled = true\nevery_particle = 10\n"),
                                                field, reef_set, sources(3));
  CHECK(tracks.track_bytes > 0);
  CHECK(tracks.disk_bytes == tracks.settlement_bytes + tracks.track_bytes);
}

TEST_CASE("a study over the memory limit, the free memory or the free disk is refused") {
  drift::ResourceEstimate e;
  e.particles = 1000000;
  e.bytes_per_particle = 100;
  e.particle_bytes = 100000000;
  e.memory_bytes = 150000000;
  e.records_max = 1000000;
  e.settlement_bytes = 44000000;
  e.disk_bytes = 44000000;
  const std::uint64_t plenty = std::uint64_t{1} << 40;
  CHECK_NOTHROW(drift::check_resources(e, {plenty, 0, plenty, "out"}));
  CHECK_NOTHROW(drift::check_resources(e, {plenty, 200000000, plenty, "out"}));
  CHECK_THROWS_AS(drift::check_resources(e, {plenty, 1024, plenty, "out"}), ResourceError);
  CHECK_THROWS_WITH(drift::check_resources(e, {plenty, 1024, plenty, "out"}),
                    Contains("--max-memory allows 1.00 KiB") && Contains("1,000,000 particles") &&
                        Contains("larvae_per_reef"));
  CHECK_THROWS_WITH(drift::check_resources(e, {100000000, 0, plenty, "out"}), Contains("is available"));
  CHECK_THROWS_WITH(drift::check_resources(e, {plenty, 0, 1000, "runs/b"}),
                    Contains("disk in runs/b") && Contains("1,000,000 settlement records"));
}
