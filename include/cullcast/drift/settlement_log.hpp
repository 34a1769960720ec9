#pragma once
// Settlement records and final fates of one drift run, streamed to a NetCDF-4
// file (and optionally CSV) and moved into place only when complete.
//
// File layout (docs/formats.md, "settlement.nc"):
//   dimensions  settlement (unlimited), source, reef, event
//   settlement_event/source/reef(settlement)   indices into the tables below
//   release_time, settle_time(settlement)      seconds since 1970-01-01 00:00:00,
//                                              calendar of the currents (CF-1.13 §4.4)
//   age(settlement)                            days
//   weight(settlement)                         larvae represented at settlement
//   source_id(source), source_kind(source), source_reef(source), reef_id(reef),
//   event_label(event), event_start(event)
//   released/settled/died/stranded/lost/drifting(event, source)   particle counts
#include <cstdint>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "cullcast/currents/calendar.hpp"

namespace cullcast::drift {

struct SettlementRecord {
  std::uint32_t event = 0;
  std::uint32_t source = 0;
  std::int32_t reef = -1;
  double release_time_s = 0;  // model seconds
  double settle_time_s = 0;   // model seconds
  double age_s = 0;
  double weight = 0;
};

struct FateCounts {
  std::int64_t released = 0, settled = 0, died = 0, stranded = 0, lost = 0, drifting = 0;
  // Settled weight (larvae represented); equals `settled` without weight mortality.
  double settled_weight = 0;
};

struct LogTables {
  std::vector<std::string> source_ids;
  std::vector<std::uint8_t> source_kinds;   // 0 reef, 1 aggregation
  std::vector<std::int32_t> source_reefs;   // reef index of each source, or -1
  std::vector<std::string> reef_ids;
  std::vector<std::string> event_labels;
  std::vector<double> event_starts_s;       // model seconds
  currents::Calendar calendar;
  std::vector<std::pair<std::string, std::string>> attributes;  // provenance (global attributes)
};

class SettlementLog {
 public:
  // Opens temporary files beside `netcdf_path` (and `csv_path` when not empty).
  SettlementLog(std::filesystem::path netcdf_path, std::filesystem::path csv_path,
                LogTables tables);
  SettlementLog(const SettlementLog&) = delete;
  SettlementLog& operator=(const SettlementLog&) = delete;
  ~SettlementLog() noexcept;  // without commit(): temporary files removed, targets untouched

  void add(const SettlementRecord& record);
  void set_fates(std::uint32_t event, std::uint32_t source, const FateCounts& counts);
  std::uint64_t records_written() const { return total_; }
  void commit();

 private:
  void flush();
  struct Impl;
  std::unique_ptr<Impl> impl_;
  std::uint64_t total_ = 0;
};

// Reads a settlement file back (for the connectivity stage and tests).
struct SettlementData {
  LogTables tables;
  std::vector<SettlementRecord> records;
  std::vector<FateCounts> fates;  // [event * sources + source]
};
SettlementData read_settlement_log(const std::filesystem::path& netcdf_path);

}  // namespace cullcast::drift
