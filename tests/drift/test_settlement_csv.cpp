// settlement.csv quotes fields that hold commas or quotes (RFC 4180 §2), so
// an event label such as "2 Dec 2026, night" stays one field.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>
#include <string>

#include "cullcast/drift/settlement_log.hpp"

namespace fs = std::filesystem;
using namespace cullcast;

TEST_CASE("settlement.csv quotes labels and ids holding commas or quotes") {
  const fs::path dir = fs::temp_directory_path() / "cullcast-settlement-csv";
  fs::create_directories(dir);
  drift::LogTables t;
  t.source_ids = {"R \"one\""};
  t.source_kinds = {0};
  t.source_reefs = {0};
  t.reef_ids = {"R \"one\""};
  t.event_labels = {"2 Dec 2026, night"};
  t.event_starts_s = {0.0};
  {
    drift::SettlementLog log(dir / "settlement.nc", dir / "settlement.csv", t);
    log.add({0, 0, 0, 0.0, 86400.0, 86400.0, 1.0});
    log.commit();
  }
  std::ifstream in(dir / "settlement.csv");
  std::string header, row;
  std::getline(in, header);
  std::getline(in, row);
  CHECK(row.rfind("\"2 Dec 2026, night\",\"R \"\"one\"\"\",\"R \"\"one\"\"\",", 0) == 0);
  fs::remove_all(dir);
}
