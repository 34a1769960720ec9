// Conservation of larvae from the records: released = settled + died + stranded
// + lost + unsettled, on a real settlement.nc written with drift::SettlementLog.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>

#include "cullcast/cull/conservation.hpp"
#include "cullcast/drift/settlement_log.hpp"

namespace fs = std::filesystem;
using namespace cullcast;

namespace {

fs::path write_log(const fs::path& file, bool break_books) {
  drift::LogTables t;
  t.source_ids = {"C-0", "C-1"};
  t.source_kinds = {0, 0};
  t.source_reefs = {0, 1};
  t.reef_ids = {"C-0", "C-1"};
  t.event_labels = {"night 1"};
  t.event_starts_s = {0.0};
  t.calendar = currents::Calendar::from_name("standard");
  drift::SettlementLog log(file, "", t);
  const int settled[2] = {7, 3};
  for (std::uint32_t s = 0; s < 2; ++s) {
    for (int k = 0; k < settled[s]; ++k) log.add({0, s, static_cast<std::int32_t>(k % 2), 0.0, 1.7e6, 1.7e6, 1.0});
    drift::FateCounts f;
    f.released = 100;
    f.settled = settled[s];
    f.settled_weight = settled[s];
    f.died = 50;
    f.stranded = 10;
    f.lost = 20;
    f.drifting = 100 - 50 - 10 - 20 - settled[s] - (break_books && s == 1 ? 1 : 0);
    log.set_fates(0, s, f);
  }
  log.commit();
  return file;
}

}  // namespace

TEST_CASE("conservation: the records of a real settlement file add up") {
  const fs::path dir = fs::temp_directory_path() / ("cullcast-cull-books-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  const auto data = drift::read_settlement_log(write_log(dir / "settlement.nc", false));
  const auto r = cull::check_conservation(data);
  CHECK(r.ok());
  CHECK(r.released == 200);
  CHECK(r.settled == 10);
  CHECK(r.records == 10);
  CHECK(r.released == r.settled + r.died + r.stranded + r.lost + r.unsettled);

  const auto bad = cull::check_conservation(drift::read_settlement_log(write_log(dir / "bad.nc", true)));
  REQUIRE_FALSE(bad.ok());
  CHECK_THAT(bad.problems.front(), Catch::Matchers::Contains("C-1"));
  // Records that disagree with the fate table are caught too.
  auto missing = data;
  missing.records.pop_back();
  CHECK_FALSE(cull::check_conservation(missing).ok());
  fs::remove_all(dir);
}
