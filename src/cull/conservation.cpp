// Conservation of larvae in the settlement records; contract in conservation.hpp.
#include "cullcast/cull/conservation.hpp"

namespace cullcast::cull {

ConservationReport check_conservation(const drift::SettlementData& d) {
  ConservationReport r;
  const std::size_t ns = d.tables.source_ids.size(), ne = d.tables.event_labels.size();
  std::vector<std::int64_t> records(ns * ne, 0);
  for (const auto& rec : d.records) {
    ++r.records;
    if (rec.event < ne && rec.source < ns) ++records[rec.event * ns + rec.source];
  }
  for (std::size_t e = 0; e < ne; ++e) {
    for (std::size_t s = 0; s < ns && e * ns + s < d.fates.size(); ++s) {
      const auto& f = d.fates[e * ns + s];
      r.released += f.released;
      r.settled += f.settled;
      r.died += f.died;
      r.stranded += f.stranded;
      r.lost += f.lost;
      r.unsettled += f.drifting;
      const std::string where = "event \"" + d.tables.event_labels[e] + "\", source \"" + d.tables.source_ids[s] + "\"";
      const std::int64_t sum = f.settled + f.died + f.stranded + f.lost + f.drifting;
      if (sum != f.released) {
        r.problems.push_back(where + ": released " + std::to_string(f.released) + " but settled + died + stranded + lost + unsettled = " + std::to_string(sum));
      }
      if (records[e * ns + s] != f.settled) {
        r.problems.push_back(where + ": " + std::to_string(f.settled) + " settled in the fate table but " +
                             std::to_string(records[e * ns + s]) + " settlement records");
      }
    }
  }
  return r;
}

}  // namespace cullcast::cull
