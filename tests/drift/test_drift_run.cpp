// The drift stage end to end on real files: a CF-NetCDF currents file written
// here with netCDF-C++, a GeoJSON reef layer read through GDAL, settlement
// records written to NetCDF and read back.
#include <catch2/catch.hpp>

#include <omp.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <netcdf>
#include <set>

#include "../support/drift_scene.hpp"
#include "../support/scratch_folder.hpp"
#include "../support/uniform_currents.hpp"
#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/batch_queue.hpp"
#include "cullcast/drift/drift_run.hpp"
#include "cullcast/drift/earth_model.hpp"
#include "cullcast/reefs/reef_set.hpp"
#include "cullcast/reefs/release_plan.hpp"
#include "cullcast/study/load_study.hpp"

namespace fs = std::filesystem;
using namespace cullcast;

namespace {

constexpr double kU = 0.1;  // eastward current, m/s

struct Workspace : test::ScratchFolder {
  Workspace() : ScratchFolder("drift-run") {
    // Uniform eastward flow, hourly for 5 days, 0.01° grid.
    test::CurrentsSpec c;
    c.name = "uniform.nc";
    c.u_m_s = {kU};
    test::write_uniform_currents(dir, c);
    std::ofstream(dir / "reefs.geojson") << test::reef_layer({test::kWestReef, test::east_reef(false)});
  }

  study::Study study(const std::string& extra = "") const {
    test::ScenarioSpec spec;
    spec.name = "uniform flow";
    spec.seed = 3;
    spec.currents = "uniform.nc";
    spec.tail = "settlement_csv = true\n" + extra;
    std::ofstream(dir / "s.toml") << test::scenario_text(spec);
    return study::load_study(dir / "s.toml");
  }
};

// Three reefs on one line of the eastward flow: larvae of WEST (19 km, 52 h)
// and of MID (14 km, 38 h) both reach EAST when competent (> 1 day), so
// their records interleave step by step; the random walk spreads them. Two
// spawning events.
study::Study three_reefs_in_line(const Workspace& w) {
  std::ofstream(w.dir / "reefs.geojson") << test::reef_layer({test::kWestReef, test::kMidReef, test::east_reef(false)});
  study::Study s = w.study("[[spawning]]\nstart = \"2026-12-01T12:00:00Z\"\nhours = 3\nlarvae_per_reef = 150\n");
  s.motion.kh_m2_s = 20;
  s.larvae.mortality_per_day = 0.2;
  return s;
}

// The study drifted by one process on one thread: the reference a shared or
// queued drift must reproduce.
struct Reference {
  drift::DriftSummary summary;
  drift::SettlementData data;
  std::string csv;
};

Reference drift_alone(const study::Study& s, currents::CurrentField& field, const reefs::ReefSet& reef_set,
                      const std::vector<reefs::ReleaseSource>& sources) {
  omp_set_num_threads(1);
  Reference r;
  r.summary = drift::run_drift(s, field, reef_set, sources);
  r.data = drift::read_settlement_log(s.outputs.dir / "settlement.nc");
  r.csv = test::read_all(s.outputs.dir / "settlement.csv");
  REQUIRE(r.data.records.size() > 100);
  return r;
}

// The final fates of a shared or queued drift against the reference's.
void check_same_fates(const drift::SettlementData& got, const drift::SettlementData& expected) {
  REQUIRE(got.fates.size() == expected.fates.size());
  for (std::size_t i = 0; i < got.fates.size(); ++i) {
    CHECK(got.fates[i].released == expected.fates[i].released);
    CHECK(got.fates[i].settled == expected.fates[i].settled);
    CHECK(got.fates[i].died == expected.fates[i].died);
    CHECK(got.fates[i].lost == expected.fates[i].lost);
    CHECK(got.fates[i].settled_weight == expected.fates[i].settled_weight);
  }
}

}  // namespace

TEST_CASE("uniform current carries larvae from the west reef to the east reef on time") {
  Workspace w;
  const study::Study s = w.study();
  const auto summary = test::run_drift_from_files(s);
  const auto data = drift::read_settlement_log(s.outputs.dir / "settlement.nc");
  REQUIRE(data.tables.reef_ids == std::vector<std::string>{"WEST", "EAST"});
  REQUIRE(data.tables.source_ids == std::vector<std::string>{"WEST", "EAST"});
  // All 200 larvae of WEST settle on EAST; those of EAST cross it too young
  // (2 km in 5.6 h < 1 day) and leave the grid at its eastern edge.
  const auto& west = data.fates[0];
  const auto& east = data.fates[1];
  CHECK(west.released == 200);
  CHECK(west.settled == 200);
  CHECK(east.released == 200);
  CHECK(east.lost == 200);
  CHECK(summary.totals.settled == 200);
  REQUIRE(data.records.size() == 200);

  // Analytic arrival: x(t) = x0 + U·t / (R cos φ · π/180) on the sphere; the
  // particle settles at the end of the first step after it reaches 150.25°E.
  // The release positions are not stored, so bound the settle time instead:
  // every start lies in 150.05..150.07, hence arrival in [t(150.07), t(150.05)].
  const auto earth = drift::EarthModel::sphere(6371000.0);
  const double dt = 900;
  const double event_start = data.tables.event_starts_s[0];
  for (const auto& r : data.records) {
    CHECK(r.source == 0);
    CHECK(r.reef == 1);
    const double per_metre = 1.0 / earth.metres_per_degree_lon(-20.1);
    // latitude is constant (v = 0): take the record's latitude band bounds
    const double t_min = (150.25 - 150.07) / (kU * per_metre);
    const double t_max = (150.25 - 150.05) / (kU * per_metre);
    const double age = r.settle_time_s - event_start;
    CHECK(age >= std::floor(t_min / dt) * dt);
    CHECK(age <= std::ceil(t_max / dt) * dt + 1e-6);
    CHECK(std::fmod(age, dt) == Approx(0).margin(1e-6));
    CHECK(r.age_s == Approx(age));
    CHECK(r.weight == 1.0);
  }
  CHECK(fs::exists(s.outputs.dir / "settlement.csv"));
  for (const auto& entry : fs::directory_iterator(s.outputs.dir)) {
    CHECK(entry.path().filename().string().find(".part-") == std::string::npos);
  }
}

TEST_CASE("settlement records are bit-identical for 1 and 2 threads") {
  Workspace w;
  auto records_with = [&](int threads) {
    omp_set_num_threads(threads);
    study::LoadOptions o;
    o.overrides = {"motion.kh_m2_s=20", "larvae.mortality_as=random", "larvae.mortality_per_day=0.3",
                   "larvae.settle_rate_per_day=3", "spawning.hours=6"};
    w.study();  // writes s.toml
    const study::Study s = study::load_study(w.dir / "s.toml", o);
    test::run_drift_from_files(s);
    return drift::read_settlement_log(s.outputs.dir / "settlement.nc");
  };
  const auto a = records_with(1);
  const auto b = records_with(2);
  omp_set_num_threads(omp_get_num_procs());
  REQUIRE(a.records.size() == b.records.size());
  REQUIRE(!a.records.empty());
  for (std::size_t i = 0; i < a.records.size(); ++i) {
    CHECK(a.records[i].reef == b.records[i].reef);
    CHECK(a.records[i].source == b.records[i].source);
    CHECK(a.records[i].settle_time_s == b.records[i].settle_time_s);
    CHECK(a.records[i].weight == b.records[i].weight);
  }
  for (std::size_t k = 0; k < a.fates.size(); ++k) {
    CHECK(a.fates[k].settled == b.fates[k].settled);
    CHECK(a.fates[k].died == b.fates[k].died);
    CHECK(a.fates[k].lost == b.fates[k].lost);
    const auto& f = a.fates[k];
    CHECK(f.released == f.settled + f.died + f.stranded + f.lost + f.drifting);
  }
}

TEST_CASE("events beyond the currents' time span are refused before any output") {
  Workspace w;
  study::LoadOptions o;
  o.overrides = {"spawning.start=2026-12-04T00:00:00Z"};
  w.study();
  const study::Study s = study::load_study(w.dir / "s.toml", o);
  CHECK_THROWS_WITH(test::run_drift_from_files(s),
                    Catch::Matchers::Contains("needs currents from 2026-12-04T00:00:00Z") &&
                        Catch::Matchers::Contains("cover 2026-12-01T00:00:00Z to 2026-12-06T00:00:00Z"));
  CHECK(!fs::exists(s.outputs.dir / "settlement.nc"));
}

TEST_CASE("a drift shared between processes merges to the single-process records, bit for bit") {
  Workspace w;
  study::Study s = three_reefs_in_line(w);
  currents::CurrentField field = currents::CurrentField::open(s.currents);
  const auto reef_set = reefs::ReefSet::load(s.reefs);
  const auto sources = reefs::release_sources(reef_set, s);
  REQUIRE(sources.size() == 3);

  const Reference ref = drift_alone(s, field, reef_set, sources);
  const drift::DriftSummary& whole = ref.summary;
  const drift::SettlementData& expected = ref.data;
  std::set<std::uint32_t> settling_sources;
  for (const auto& r : expected.records) settling_sources.insert(r.source);
  REQUIRE(settling_sources.size() >= 2);  // the merge has records of several sources to interleave
  fs::remove_all(s.outputs.dir);

  // Three "processes" of 2 batches each: part 0 = event 1 sources 1-2, part 1 =
  // event 1 source 3 and event 2 source 1, part 2 = event 2 sources 2-3. Parts 2
  // and 1 run first and keep their outcomes; part 0 merges them as rank 0 would.
  const auto batches = drift::list_batches(s, sources.size());
  const auto cuts = drift::split_by_cost(batches, 3);
  REQUIRE(cuts == std::vector<std::size_t>{0, 2, 4, 6});
  std::vector<std::vector<drift::EventOutcome>> kept(3);
  omp_set_num_threads(2);
  for (std::size_t part : {2u, 1u}) {
    drift::DriftShare share = drift::DriftShare::of(batches, cuts[part], cuts[part + 1], 2, sources.size());
    share.write_outputs = false;
    share.exchange = [&, part](std::uint32_t, drift::EventOutcome& o) { kept[part].push_back(o); };
    drift::run_drift(s, field, reef_set, sources, {}, share);
  }
  CHECK(!fs::exists(s.outputs.dir));  // helpers write nothing
  drift::DriftShare root = drift::DriftShare::of(batches, cuts[0], cuts[1], 2, sources.size());
  root.exchange = [&](std::uint32_t e, drift::EventOutcome& o) {
    drift::merge_outcome(o, kept[1].at(e));
    drift::merge_outcome(o, kept[2].at(e));
  };
  const drift::DriftSummary merged = drift::run_drift(s, field, reef_set, sources, {}, root);
  omp_set_num_threads(omp_get_num_procs());

  const auto got = drift::read_settlement_log(s.outputs.dir / "settlement.nc");
  REQUIRE(got.records.size() == expected.records.size());
  for (std::size_t i = 0; i < got.records.size(); ++i) {
    const auto &a = got.records[i], &b = expected.records[i];
    INFO("record " << i);
    CHECK(a.event == b.event);
    CHECK(a.source == b.source);
    CHECK(a.reef == b.reef);
    CHECK(a.release_time_s == b.release_time_s);
    CHECK(a.settle_time_s == b.settle_time_s);
    CHECK(a.age_s == b.age_s);
    CHECK(a.weight == b.weight);
  }
  check_same_fates(got, expected);
  CHECK(test::read_all(s.outputs.dir / "settlement.csv") == ref.csv);
  CHECK(merged.totals.settled == whole.totals.settled);
  CHECK(merged.totals.settled_weight == whole.totals.settled_weight);
  CHECK(merged.particle_steps == whole.particle_steps);
  CHECK(merged.records == whole.records);
  CHECK(merged.max_courant == whole.max_courant);
}

TEST_CASE("batches handed out by a queue, in chunks of any grouping, merge to the single-process records") {
  // As above, with two "processes" whose static parts are batches 1 and 2
  // of 6 (event 1, WEST and MID); a BatchQueue hands out the other 4 one at a
  // time: the helper takes the 1st and the 4th (EAST of both events), the root
  // the 2nd and 3rd: WEST and MID of event 2 as two chunks, drifted one after
  // the other, whose records interleave step by step and must be merged.
  Workspace w;
  study::Study s = three_reefs_in_line(w);
  currents::CurrentField field = currents::CurrentField::open(s.currents);
  const auto reef_set = reefs::ReefSet::load(s.reefs);
  const auto sources = reefs::release_sources(reef_set, s);
  const Reference ref = drift_alone(s, field, reef_set, sources);
  const drift::DriftSummary& whole = ref.summary;
  const drift::SettlementData& expected = ref.data;
  fs::remove_all(s.outputs.dir);

  const auto batches = drift::list_batches(s, sources.size());
  REQUIRE(batches.size() == 6);
  const std::size_t queued_from = drift::queue_start(batches, 2.0 / 6.0);  // equal costs: after 2 batches
  REQUIRE(queued_from == 2);
  drift::BatchQueue queue(batches, queued_from, 2);
  std::vector<drift::QueuedChunk> for_root;
  std::size_t helper_chunks = 0;
  auto to_chunk = [&](std::pair<std::size_t, std::size_t> r) {
    drift::QueuedChunk c;
    c.event = batches[r.first].event;
    for (std::size_t i = r.first; i < r.second; ++i) c.sources.push_back(batches[i].source);
    return c;
  };
  std::vector<drift::EventOutcome> helper_kept;
  omp_set_num_threads(2);
  {
    drift::DriftShare helper = drift::DriftShare::of(batches, 1, 2, 2, sources.size());
    helper.write_outputs = false;
    helper.exchange = [&](std::uint32_t, drift::EventOutcome& o) { helper_kept.push_back(o); };
    helper.next_chunk = [&]() -> std::optional<drift::QueuedChunk> {
      const auto mine = queue.take();
      if (!mine) return std::nullopt;
      if (helper_chunks++ == 0) {
        for (int k = 0; k < 2; ++k) {
          if (const auto other = queue.take()) for_root.push_back(to_chunk(*other));
        }
      }
      return to_chunk(*mine);
    };
    drift::run_drift(s, field, reef_set, sources, {}, helper);
  }
  CHECK(helper_chunks == 2);
  REQUIRE(for_root.size() == 2);
  CHECK(for_root[0].event == 1);
  CHECK(for_root[0].sources == std::vector<std::uint32_t>{0});
  CHECK(for_root[1].event == 1);
  CHECK(for_root[1].sources == std::vector<std::uint32_t>{1});
  CHECK(queue.batches_left() == 0);
  std::size_t polls = 0;
  drift::DriftShare root = drift::DriftShare::of(batches, 0, 1, 2, sources.size());
  root.exchange = [&](std::uint32_t e, drift::EventOutcome& o) { drift::merge_outcome(o, helper_kept.at(e)); };
  root.next_chunk = [&, next = std::size_t{0}]() mutable -> std::optional<drift::QueuedChunk> {
    if (next == for_root.size()) return std::nullopt;
    return for_root[next++];
  };
  root.poll = [&] { ++polls; };
  const drift::DriftSummary merged = drift::run_drift(s, field, reef_set, sources, {}, root);
  omp_set_num_threads(omp_get_num_procs());
  CHECK(polls > 100);  // between the time steps of every batch the root drifted

  const auto got = drift::read_settlement_log(s.outputs.dir / "settlement.nc");
  REQUIRE(got.records.size() == expected.records.size());
  std::size_t differing = 0;
  for (std::size_t i = 0; i < got.records.size(); ++i) {
    const auto &a = got.records[i], &b = expected.records[i];
    if (a.event != b.event || a.source != b.source || a.reef != b.reef || a.release_time_s != b.release_time_s ||
        a.settle_time_s != b.settle_time_s || a.age_s != b.age_s || a.weight != b.weight) {
      ++differing;
    }
  }
  CHECK(differing == 0);
  check_same_fates(got, expected);
  CHECK(test::read_all(s.outputs.dir / "settlement.csv") == ref.csv);
  CHECK(merged.totals.settled == whole.totals.settled);
  CHECK(merged.particle_steps == whole.particle_steps);
  CHECK(merged.records == whole.records);
}
