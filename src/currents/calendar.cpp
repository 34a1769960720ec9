// CF calendars (CF-1.13 §4.4.1 and table 4.1). Model seconds count from
// 1970-01-01T00:00:00 in the calendar itself, so day arithmetic is exact and
// a civil date maps to the same model time the files use.
#include "cullcast/currents/calendar.hpp"

#include <algorithm>
#include <array>
#include <cctype>
#include <cmath>
#include <stdexcept>

namespace cullcast::currents {
namespace {

constexpr double kSecondsPerDay = 86400.0;
constexpr std::array<int, 12> kMonthDays = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};

bool leap_gregorian(int y) { return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0; }
bool leap_julian(int y) { return ((y % 4) + 4) % 4 == 0; }

long long floor_div(long long a, long long b) { return a / b - ((a % b != 0) && ((a < 0) != (b < 0))); }

// Julian-calendar day count with the same shape as Hinnant's algorithm
// (4-year eras of 1461 days instead of 400-year eras).
long long raw_days_julian(int y, int m, int d) {
  y -= m <= 2;
  const long long era = floor_div(y, 4);
  const long long yoe = y - era * 4;
  const long long doy = (153 * (m + (m > 2 ? -3 : 9)) + 2) / 5 + d - 1;
  return era * 1461 + yoe * 365 + doy;
}
// Day counts for Julian dates: from Gregorian 1970-01-01 (= Julian 1969-12-19),
// as the standard calendar needs, or from Julian 1970-01-01 (julian calendar).
const long long kGregorianEpochInJulian = raw_days_julian(1969, 12, 19);
const long long kJulianEpoch = raw_days_julian(1970, 1, 1);

long long days_from_civil_julian(int y, int m, int d, long long epoch) { return raw_days_julian(y, m, d) - epoch; }

void civil_from_days_julian(long long days, long long epoch, int& y, int& m, int& d) {
  const long long z = days + epoch;
  const long long era = floor_div(z, 1461);
  const long long doe = z - era * 1461;                       // 0..1460
  const long long yoe = std::min<long long>(doe / 365, 3);     // the last day of an era is day 365 of year 3
  const long long doy = doe - yoe * 365;
  const long long mp = (5 * doy + 2) / 153;
  d = static_cast<int>(doy - (153 * mp + 2) / 5 + 1);
  m = static_cast<int>(mp < 10 ? mp + 3 : mp - 9);
  y = static_cast<int>(yoe + era * 4 + (m <= 2));
}

// First Gregorian day of the standard calendar: 1582-10-15 (CF-1.13 table 4.1).
const long long kGregorianStart = days_from_civil_gregorian(1582, 10, 15);

int days_in_month(CalendarKind kind, int y, int m) {
  switch (kind) {
    case CalendarKind::day360: return 30;
    case CalendarKind::noleap: return kMonthDays[m - 1];
    case CalendarKind::all_leap: return m == 2 ? 29 : kMonthDays[m - 1];
    case CalendarKind::julian: return (m == 2 && leap_julian(y)) ? 29 : kMonthDays[m - 1];
    case CalendarKind::proleptic_gregorian:
      return (m == 2 && leap_gregorian(y)) ? 29 : kMonthDays[m - 1];
    case CalendarKind::standard:
      if (y < 1582 || (y == 1582 && m < 10)) return (m == 2 && leap_julian(y)) ? 29 : kMonthDays[m - 1];
      return (m == 2 && leap_gregorian(y)) ? 29 : kMonthDays[m - 1];
  }
  return 30;
}

long long fixed_year_days(int y, int m, int d, int year_length) {
  long long before = 0;
  for (int k = 1; k < m; ++k) before += (year_length == 366 && k == 2) ? 29 : kMonthDays[k - 1];
  return static_cast<long long>(y - 1970) * year_length + before + d - 1;
}

void fixed_year_civil(long long days, int year_length, int& y, int& m, int& d) {
  const long long yo = floor_div(days, year_length);
  long long doy = days - yo * year_length;
  y = static_cast<int>(1970 + yo);
  m = 1;
  for (;; ++m) {
    const int len = (year_length == 366 && m == 2) ? 29 : kMonthDays[m - 1];
    if (doy < len) break;
    doy -= len;
  }
  d = static_cast<int>(doy + 1);
}

std::string lower(std::string_view s) {
  std::string out(s);
  for (char& c : out) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return out;
}

}  // namespace

Calendar Calendar::from_name(std::string_view name) {
  const std::string n = lower(name);
  if (n == "standard" || n == "gregorian") return Calendar(CalendarKind::standard);
  if (n == "proleptic_gregorian") return Calendar(CalendarKind::proleptic_gregorian);
  if (n == "julian") return Calendar(CalendarKind::julian);
  if (n == "noleap" || n == "365_day") return Calendar(CalendarKind::noleap);
  if (n == "all_leap" || n == "366_day") return Calendar(CalendarKind::all_leap);
  if (n == "360_day") return Calendar(CalendarKind::day360);
  if (n == "utc" || n == "tai" || n == "none") {
    throw std::invalid_argument("calendar '" + std::string(name) +
                                "' (CF-1.13 table 4.1) is not supported; use standard, "
                                "proleptic_gregorian, julian, noleap, all_leap or 360_day");
  }
  throw std::invalid_argument("unknown calendar '" + std::string(name) +
                              "'; expected one of standard, gregorian, proleptic_gregorian, julian, "
                              "noleap, 365_day, all_leap, 366_day, 360_day (CF-1.13 §4.4.1)");
}

std::string Calendar::name() const {
  switch (kind_) {
    case CalendarKind::standard: return "standard";
    case CalendarKind::proleptic_gregorian: return "proleptic_gregorian";
    case CalendarKind::julian: return "julian";
    case CalendarKind::noleap: return "noleap";
    case CalendarKind::all_leap: return "all_leap";
    case CalendarKind::day360: return "360_day";
  }
  return "standard";
}

double Calendar::to_seconds(const CivilTime& t) const {
  if (t.year < -kMaxCalendarYear || t.year > kMaxCalendarYear) {
    throw std::invalid_argument("year " + std::to_string(t.year) + " is beyond the supported range (+-" +
                                std::to_string(kMaxCalendarYear) + ")");
  }
  if (t.month < 1 || t.month > 12) {
    throw std::invalid_argument("month " + std::to_string(t.month) + " is not 1..12");
  }
  if (t.day < 1 || t.day > days_in_month(kind_, t.year, t.month)) {
    throw std::invalid_argument("date " + std::to_string(t.year) + "-" + std::to_string(t.month) + "-" +
                                std::to_string(t.day) + " does not exist in the " + name() + " calendar");
  }
  if (t.hour < 0 || t.hour > 23 || t.minute < 0 || t.minute > 59 || !(t.second >= 0) || t.second >= 61) {
    throw std::invalid_argument("time of day out of range");
  }
  long long days = 0;
  switch (kind_) {
    case CalendarKind::proleptic_gregorian: days = days_from_civil_gregorian(t.year, t.month, t.day); break;
    case CalendarKind::julian: days = days_from_civil_julian(t.year, t.month, t.day, kJulianEpoch); break;
    case CalendarKind::noleap: days = fixed_year_days(t.year, t.month, t.day, 365); break;
    case CalendarKind::all_leap: days = fixed_year_days(t.year, t.month, t.day, 366); break;
    case CalendarKind::day360:
      days = static_cast<long long>(t.year - 1970) * 360 + (t.month - 1) * 30 + t.day - 1;
      break;
    case CalendarKind::standard: {
      const long long g = days_from_civil_gregorian(t.year, t.month, t.day);
      if (g >= kGregorianStart) {
        days = g;
      } else {
        days = days_from_civil_julian(t.year, t.month, t.day, kGregorianEpochInJulian);
        // Julian 1582-10-05..14 would land on or after the switch: those dates do not exist.
        if (days >= kGregorianStart) {
          throw std::invalid_argument("date " + std::to_string(t.year) + "-" + std::to_string(t.month) + "-" +
                                      std::to_string(t.day) +
                                      " does not exist in the standard calendar (1582-10-05..14 skipped)");
        }
      }
      break;
    }
  }
  return static_cast<double>(days) * kSecondsPerDay + t.hour * 3600.0 + t.minute * 60.0 + t.second;
}

CivilTime Calendar::to_civil(double seconds) const {
  // 366 days a year: a bound for every calendar, so the casts below cannot overflow.
  constexpr double kMaxSeconds = (kMaxCalendarYear + 1970.0) * 366.0 * kSecondsPerDay;
  if (!(std::abs(seconds) <= kMaxSeconds)) {
    throw std::invalid_argument("time " + std::to_string(seconds) + " s from 1970 is not finite or beyond year +-" +
                                std::to_string(kMaxCalendarYear));
  }
  // Round to the microsecond so that e.g. 3599.9999999 does not print as 00:59:59.999.
  const double rounded = std::round(seconds * 1e6) / 1e6;
  long long days = static_cast<long long>(std::floor(rounded / kSecondsPerDay));
  double rest = rounded - static_cast<double>(days) * kSecondsPerDay;
  if (rest >= kSecondsPerDay) { ++days; rest -= kSecondsPerDay; }
  if (rest < 0) rest = 0;
  CivilTime t;
  switch (kind_) {
    case CalendarKind::proleptic_gregorian: civil_from_days_gregorian(days, t.year, t.month, t.day); break;
    case CalendarKind::julian: civil_from_days_julian(days, kJulianEpoch, t.year, t.month, t.day); break;
    case CalendarKind::noleap: fixed_year_civil(days, 365, t.year, t.month, t.day); break;
    case CalendarKind::all_leap: fixed_year_civil(days, 366, t.year, t.month, t.day); break;
    case CalendarKind::day360: {
      const long long yo = floor_div(days, 360);
      const long long doy = days - yo * 360;
      t.year = static_cast<int>(1970 + yo);
      t.month = static_cast<int>(doy / 30 + 1);
      t.day = static_cast<int>(doy % 30 + 1);
      break;
    }
    case CalendarKind::standard:
      if (days >= kGregorianStart) civil_from_days_gregorian(days, t.year, t.month, t.day);
      else civil_from_days_julian(days, kGregorianEpochInJulian, t.year, t.month, t.day);
      break;
  }
  const long long whole = static_cast<long long>(std::floor(rest));
  t.hour = static_cast<int>(whole / 3600);
  t.minute = static_cast<int>((whole % 3600) / 60);
  t.second = rest - static_cast<double>(whole - whole % 60);
  return t;
}

}  // namespace cullcast::currents
