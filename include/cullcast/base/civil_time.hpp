#pragma once
// A calendar date and time of day, without a calendar attached. The currents
// module turns it into model seconds using the calendar of the currents files
// (CF-1.13 §4.4.1), so a spawning night means the same model time whatever the
// model's calendar (standard, noleap, 360_day, ...).
#include <string>
#include <string_view>

namespace cullcast {

struct CivilTime {
  int year = 1970;
  int month = 1;       // 1..12
  int day = 1;         // 1..31 (1..30 in a 360-day calendar)
  int hour = 0;        // 0..23
  int minute = 0;      // 0..59
  double second = 0;   // 0 <= second < 60 (no leap seconds)

  bool operator==(const CivilTime&) const = default;
};

// Parses ISO 8601 "YYYY-MM-DD[THH:MM[:SS[.fff]]][Z|±HH:MM]". A UTC offset is
// removed with proleptic Gregorian arithmetic so the result is UTC. Without a
// zone the time is taken as UTC. Throws std::invalid_argument naming what is
// wrong (the caller adds file and field).
CivilTime parse_iso8601(std::string_view text);

// "YYYY-MM-DDTHH:MM:SSZ" (seconds rounded to the millisecond when fractional).
std::string format_iso8601(const CivilTime& time);

// Days from 1970-01-01 in the proleptic Gregorian calendar (Hinnant's
// days_from_civil algorithm), and its inverse.
long long days_from_civil_gregorian(int year, int month, int day);
void civil_from_days_gregorian(long long days, int& year, int& month, int& day);

}  // namespace cullcast
