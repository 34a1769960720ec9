#pragma once
// CONTRACT. Larval bookkeeping of the settlement records, checked before the
// records drive a decision: for every event and source,
//   released = settled + died + stranded + lost + drifting (unsettled),
// and the settled count equals the settlement records of that (event, source).
#include <cstdint>
#include <string>
#include <vector>

#include "cullcast/drift/settlement_log.hpp"

namespace cullcast::cull {

struct ConservationReport {
  std::int64_t released = 0, settled = 0, died = 0, stranded = 0, lost = 0, unsettled = 0;
  std::int64_t records = 0;             // settlement records
  std::vector<std::string> problems;    // one line per (event, source) that does not add up
  bool ok() const { return problems.empty(); }
};

ConservationReport check_conservation(const drift::SettlementData& data);

}  // namespace cullcast::cull
