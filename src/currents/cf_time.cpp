// CF-1.13 §4.4 time coordinates: "<unit> since <date> [time] [zone]".
#include "cullcast/currents/cf_time.hpp"

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <cstdlib>
#include <stdexcept>
#include <string>
#include <vector>

namespace cullcast::currents {
namespace {

std::string lower(std::string_view s) {
  std::string out(s);
  for (char& c : out) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return out;
}

double unit_seconds(const std::string& unit, std::string_view whole) {
  if (unit == "s" || unit == "sec" || unit == "secs" || unit == "second" || unit == "seconds") return 1.0;
  if (unit == "min" || unit == "mins" || unit == "minute" || unit == "minutes") return 60.0;
  if (unit == "h" || unit == "hr" || unit == "hrs" || unit == "hour" || unit == "hours") return 3600.0;
  if (unit == "d" || unit == "day" || unit == "days") return 86400.0;
  if (unit == "month" || unit == "months" || unit == "year" || unit == "years" || unit == "yr" ||
      unit == "common_year" || unit == "common_years") {
    throw std::invalid_argument("time unit '" + unit + "' in '" + std::string(whole) +
                                "' is not supported (CF-1.13 §4.4 advises against months and years); "
                                "use seconds, minutes, hours or days");
  }
  throw std::invalid_argument("unknown time unit '" + unit + "' in '" + std::string(whole) +
                              "'; expected seconds, minutes, hours or days since a date");
}

// Reads an unsigned integer of any number of digits; -1 when none. Values
// saturate at kTooBig, so a long run of digits cannot overflow and is refused
// by the range checks of the caller.
constexpr long long kTooBig = 1'000'000'000'000LL;
long long read_int(std::string_view s, size_t& pos) {
  size_t start = pos;
  long long v = 0;
  while (pos < s.size() && std::isdigit(static_cast<unsigned char>(s[pos]))) {
    v = std::min(kTooBig, v * 10 + (s[pos++] - '0'));
  }
  return pos == start ? -1 : v;
}

}  // namespace

TimeUnits parse_time_units(std::string_view text, const Calendar& calendar) {
  const std::string s = lower(text);
  const size_t since = s.find(" since ");
  if (since == std::string::npos) {
    throw std::invalid_argument("time units '" + std::string(text) +
                                "' are not of the form '<unit> since <date>' (CF-1.13 §4.4)");
  }
  std::string unit = s.substr(0, since);
  while (!unit.empty() && std::isspace(static_cast<unsigned char>(unit.front()))) unit.erase(unit.begin());
  TimeUnits out;
  out.unit_s = unit_seconds(unit, text);

  std::string_view d(s);
  d = d.substr(since + 7);
  size_t p = 0;
  auto skip_space = [&] { while (p < d.size() && std::isspace(static_cast<unsigned char>(d[p]))) ++p; };
  auto bad = [&](const std::string& why) {
    return std::invalid_argument("reference date in time units '" + std::string(text) + "': " + why +
                                 " (expected y-m-d [h:m:s] [zone], CF-1.13 §4.4)");
  };
  skip_space();
  bool negative_year = false;
  if (p < d.size() && d[p] == '-') { negative_year = true; ++p; }
  CivilTime t;
  long long y = read_int(d, p);
  if (y < 0 || p >= d.size() || d[p] != '-') throw bad("cannot read the year");
  ++p;
  long long mo = read_int(d, p);
  if (mo < 0 || p >= d.size() || d[p] != '-') throw bad("cannot read the month");
  ++p;
  long long dd = read_int(d, p);
  if (dd < 0) throw bad("cannot read the day");
  // Fields are range-checked before they become ints; the calendar checks the rest.
  if (y > kMaxCalendarYear) throw bad("year beyond " + std::to_string(kMaxCalendarYear));
  if (mo > 99 || dd > 99) throw bad("month or day out of range");
  t.year = static_cast<int>(negative_year ? -y : y);
  t.month = static_cast<int>(mo);
  t.day = static_cast<int>(dd);
  double zone_s = 0;
  if (p < d.size() && (d[p] == 't' || d[p] == ' ')) {
    ++p;
    skip_space();
    if (p < d.size() && std::isdigit(static_cast<unsigned char>(d[p]))) {
      long long hh = read_int(d, p);
      long long mm = 0;
      double ss = 0;
      if (p < d.size() && d[p] == ':') {
        ++p;
        mm = read_int(d, p);
        if (mm < 0) throw bad("cannot read the minutes");
        if (p < d.size() && d[p] == ':') {
          ++p;
          size_t start = p;
          while (p < d.size() && (std::isdigit(static_cast<unsigned char>(d[p])) || d[p] == '.')) ++p;
          const std::string digits(d.substr(start, p - start));
          char* end = nullptr;
          errno = 0;
          ss = std::strtod(digits.c_str(), &end);
          if (digits.empty() || *end != '\0' || errno == ERANGE) throw bad("cannot read the seconds");
        }
      }
      if (hh > 99 || mm > 99) throw bad("time of day out of range");
      t.hour = static_cast<int>(hh);
      t.minute = static_cast<int>(mm);
      t.second = ss;
    }
  }
  skip_space();
  if (p < d.size()) {
    std::string_view zone = d.substr(p);
    if (zone == "z" || zone == "utc" || zone == "gmt") {
      p = d.size();
    } else if (zone[0] == '+' || zone[0] == '-') {
      const double sign = zone[0] == '+' ? 1.0 : -1.0;
      ++p;
      long long zh = read_int(d, p);
      long long zm = 0;
      if (zh < 0) throw bad("cannot read the time zone");
      if (p < d.size() && d[p] == ':') { ++p; zm = read_int(d, p); }
      else if (zh >= 100) { zm = zh % 100; zh /= 100; }  // "+1000"
      if (zm < 0 || zh > 14 || zm > 59) throw bad("time zone out of range");
      zone_s = sign * (zh * 3600.0 + zm * 60.0);
      skip_space();
      if (p != d.size()) throw bad("unexpected text after the time zone");
    } else {
      throw bad("unexpected text '" + std::string(zone) + "'");
    }
  }
  try {
    out.reference_s = calendar.to_seconds(t) - zone_s;  // local time minus offset = UTC
  } catch (const std::invalid_argument& e) {
    throw bad(e.what());
  }
  return out;
}

}  // namespace cullcast::currents
