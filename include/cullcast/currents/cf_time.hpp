#pragma once
// CF time coordinates (CF-1.13 §4.4): units "<unit> since <reference date>".
// A value v of such a coordinate is the model time
//   reference_s + v * unit_s   (model seconds, counted in the calendar).
#include <string_view>

#include "cullcast/currents/calendar.hpp"

namespace cullcast::currents {

struct TimeUnits {
  double unit_s = 1;       // length of one unit, seconds (1, 60, 3600 or 86400)
  double reference_s = 0;  // the reference date in model seconds of the calendar
};

// Parses e.g. "hours since 2026-12-01 00:00:00", "days since 2020-02-28 23:10",
// "seconds since 1970-1-1T00:00:00Z", "minutes since 2000-01-01 00:00 +10:00".
// Units: s/sec/secs/second/seconds, min/mins/minute/minutes, h/hr/hrs/hour/hours,
// d/day/days. Months and years are refused (CF-1.13 §4.4 advises against them).
// Throws std::invalid_argument naming what is wrong (the caller adds file and variable).
TimeUnits parse_time_units(std::string_view units, const Calendar& calendar);

}  // namespace cullcast::currents
