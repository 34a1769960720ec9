#pragma once
// CONTRACT. CF calendars (CF-1.13 §4.4.1, table 4.1): standard/gregorian,
// proleptic_gregorian, julian, noleap/365_day, all_leap/366_day, 360_day.
// Model seconds count from 1970-01-01T00:00:00 in the calendar itself.
#include <string>
#include <string_view>

#include "cullcast/base/civil_time.hpp"

namespace cullcast::currents {

// Years this far from year 0 (either way) are refused: far beyond any ocean
// model, and it keeps every day count exact and free of integer overflow.
constexpr int kMaxCalendarYear = 1'000'000;

enum class CalendarKind { standard, proleptic_gregorian, julian, noleap, all_leap, day360 };

class Calendar {
 public:
  Calendar() = default;
  explicit Calendar(CalendarKind kind) : kind_(kind) {}
  // Accepts every CF name and alias, case-insensitive; throws std::invalid_argument otherwise.
  static Calendar from_name(std::string_view name);

  CalendarKind kind() const { return kind_; }
  std::string name() const;  // canonical CF name

  // Throws std::invalid_argument for a date that does not exist in this
  // calendar (e.g. 2025-02-29 in noleap, 2025-01-31 in 360_day) or a year
  // beyond kMaxCalendarYear.
  double to_seconds(const CivilTime& time) const;
  // Throws std::invalid_argument for seconds that are not finite or lie
  // beyond kMaxCalendarYear.
  CivilTime to_civil(double seconds) const;

 private:
  CalendarKind kind_ = CalendarKind::standard;
};

}  // namespace cullcast::currents
