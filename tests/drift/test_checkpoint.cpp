// The drift checkpoint file: round trip, and clear refusals of damaged,
// foreign or mismatched files (the kill -9 test is tests/resume/).
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>

#include "cullcast/base/error.hpp"
#include "cullcast/drift/checkpoint.hpp"

namespace fs = std::filesystem;
using namespace cullcast;

namespace {

drift::DriftCheckpoint sample() {
  drift::DriftCheckpoint c;
  c.fingerprint = 0x1234567890abcdefULL;
  c.event = 1;
  c.next_step = 42;
  c.particles.resize(3);
  c.particles.lon = {150.1, 150.2, 150.3};
  c.particles.lat = {-20.1, -20.2, -20.3};
  c.particles.fate = {drift::Fate::drifting, drift::Fate::settled, drift::Fate::waiting};
  c.particles.reef = {-1, 7, -1};
  c.particles.weight = {0.5, 0.25, 1.0};
  c.particles.enable_development();
  c.particles.development_s[2] = 12.5f;
  c.alive = 1, c.settled = 1, c.released = 2;
  c.current.particle_steps = 99;
  c.current.land_contacts = 3;
  c.current.max_speed_m_s = 0.4;
  drift::FinishedEvent done;
  done.label = "first night";
  done.particle_steps = 1000;
  done.fates.resize(2);
  done.fates[1].settled = 5;
  done.fates[1].settled_weight = 4.5;
  c.finished.push_back(done);
  c.records.push_back({0, 1, 7, 100.0, 200.0, 100.0, 0.75});
  return c;
}

}  // namespace

TEST_CASE("a drift checkpoint reads back exactly what was written") {
  const fs::path file = fs::temp_directory_path() / "cullcast-test.checkpoint";
  const auto c = sample();
  drift::write_checkpoint(file, c);
  const auto r = drift::read_checkpoint(file, c.fingerprint);
  CHECK(r.event == 1);
  CHECK(r.next_step == 42);
  CHECK(r.particles.lon == c.particles.lon);
  CHECK(r.particles.lat == c.particles.lat);
  CHECK(r.particles.fate == c.particles.fate);
  CHECK(r.particles.reef == c.particles.reef);
  CHECK(r.particles.weight == c.particles.weight);
  CHECK(r.particles.development_s == c.particles.development_s);
  CHECK(r.current.particle_steps == 99);
  CHECK(r.current.land_contacts == 3);
  CHECK(r.current.max_speed_m_s == 0.4);
  REQUIRE(r.finished.size() == 1);
  CHECK(r.finished[0].label == "first night");
  CHECK(r.finished[0].fates[1].settled == 5);
  CHECK(r.finished[0].fates[1].settled_weight == 4.5);
  REQUIRE(r.records.size() == 1);
  CHECK(r.records[0].reef == 7);
  CHECK(r.records[0].weight == 0.75);
  fs::remove(file);
}

TEST_CASE("damaged, foreign, missing or mismatched checkpoints are refused with the file named") {
  const fs::path file = fs::temp_directory_path() / "cullcast-test-bad.checkpoint";
  const auto c = sample();
  drift::write_checkpoint(file, c);
  SECTION("another study") {
    CHECK_THROWS_WITH(drift::read_checkpoint(file, c.fingerprint + 1),
                      Catch::Contains(file.string()) && Catch::Contains("different study"));
  }
  SECTION("truncated (a crash while copying it, say)") {
    fs::resize_file(file, fs::file_size(file) - 20);
    CHECK_THROWS_WITH(drift::read_checkpoint(file, c.fingerprint),
                      Catch::Contains(file.string()) && Catch::Contains("damaged"));
  }
  SECTION("not a checkpoint") {
    std::ofstream(file) << "[study]\nname = \"x\"\n";
    CHECK_THROWS_WITH(drift::read_checkpoint(file, c.fingerprint), Catch::Contains("not a cullcast drift checkpoint"));
  }
  SECTION("missing") {
    fs::remove(file);
    CHECK_THROWS_AS(drift::read_checkpoint(file, c.fingerprint), InputError);
  }
  std::error_code ignored;
  fs::remove(file, ignored);
}
