#pragma once
// For tests of the stages after the drift (connect, prioritise, brief): a
// small settlement file written by the drift stage's own writer, with settler
// counts chosen by the test.
#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/drift/settlement_log.hpp"

namespace cullcast::test {

// Every reef is also a source (kind 0, its own reef index); events are
// labelled "night 1", "night 2", ...
struct SettlementPlan {
  std::vector<std::string> reef_ids;
  std::vector<double> event_starts_s;                    // model seconds, one per event
  std::vector<double> release_s;                         // model seconds: each event's records' release time
  std::vector<std::vector<std::vector<int>>> settlers;   // [event][source][reef] records of weight 1
  double age_s = 20 * 86400.0;                           // seconds, release to settlement
  std::int64_t released = 1000;                          // particles per event and source
  std::int64_t lost = 0, drifting = 0;                   // per event and source; the rest not settled died
};

inline void write_settlement(const std::filesystem::path& file, const SettlementPlan& plan) {
  drift::LogTables t;
  t.source_ids = plan.reef_ids;
  t.source_kinds.assign(plan.reef_ids.size(), 0);
  for (std::size_t r = 0; r < plan.reef_ids.size(); ++r) t.source_reefs.push_back(static_cast<std::int32_t>(r));
  t.reef_ids = plan.reef_ids;
  for (std::size_t e = 0; e < plan.event_starts_s.size(); ++e) t.event_labels.push_back("night " + std::to_string(e + 1));
  t.event_starts_s = plan.event_starts_s;
  t.calendar = currents::Calendar::from_name("standard");
  drift::SettlementLog log(file, "", t);
  for (std::uint32_t e = 0; e < plan.settlers.size(); ++e) {
    for (std::uint32_t s = 0; s < plan.settlers[e].size(); ++s) {
      drift::FateCounts f;
      f.released = plan.released;
      for (std::size_t j = 0; j < plan.settlers[e][s].size(); ++j) {
        const int n = plan.settlers[e][s][j];
        for (int k = 0; k < n; ++k) {
          log.add({e, s, static_cast<std::int32_t>(j), plan.release_s[e], plan.release_s[e] + plan.age_s, plan.age_s,
                   1.0});
        }
        f.settled += n;
      }
      f.settled_weight = static_cast<double>(f.settled);
      f.died = f.released - f.settled - plan.lost - plan.drifting;
      f.lost = plan.lost;
      f.drifting = plan.drifting;
      log.set_fates(e, s, f);
    }
  }
  log.commit();
}

}  // namespace cullcast::test
