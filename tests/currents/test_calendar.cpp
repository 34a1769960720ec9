// Calendars and CF time units against CF-1.13 §4.4 worked examples and against
// the cftime library (python3-cftime, Debian), the reference implementation of
// CF calendars used by netCDF4-python.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <random>
#include <sstream>

#include "cullcast/currents/calendar.hpp"
#include "cullcast/currents/cf_time.hpp"
#include "currents_test_util.hpp"

using namespace cullcast;
using namespace cullcast::currents;
using cullcast::currents::testing::ScratchDir;

namespace {
CivilTime civil(int y, int mo, int d, int h = 0, int mi = 0, double s = 0) {
  CivilTime t;
  t.year = y; t.month = mo; t.day = d; t.hour = h; t.minute = mi; t.second = s;
  return t;
}
double seconds_from_units(const std::string& units, const std::string& cal, double value) {
  const Calendar c = Calendar::from_name(cal);
  const TimeUnits tu = parse_time_units(units, c);
  return tu.reference_s + value * tu.unit_s;
}
std::string run(const std::string& cmd) {
  std::string out;
  FILE* p = ::popen(cmd.c_str(), "r");
  if (!p) return out;
  char buf[4096];
  while (size_t n = std::fread(buf, 1, sizeof buf, p)) out.append(buf, n);
  ::pclose(p);
  return out;
}
const char* const kAllCalendars[] = {"standard", "proleptic_gregorian", "julian", "noleap", "all_leap", "360_day"};
}  // namespace

TEST_CASE("CF-1.13 §4.4.1 worked examples", "[calendar]") {
  // CF-1.13 §4.4.1: 1 in "days since 2020-02-28 23:10" is 2020-02-29 23:10 in
  // the standard calendar but 2020-03-01 23:10 in noleap.
  const std::string units = "days since 2020-02-28 23:10";
  {
    const Calendar c = Calendar::from_name("standard");
    CHECK(c.to_civil(seconds_from_units(units, "standard", 1)) == civil(2020, 2, 29, 23, 10));
  }
  {
    const Calendar c = Calendar::from_name("noleap");
    CHECK(c.to_civil(seconds_from_units(units, "noleap", 1)) == civil(2020, 3, 1, 23, 10));
  }
  // CF-1.13 §4.4.1: 2025-01-31 does not exist in the 360_day calendar.
  CHECK_THROWS_AS(Calendar(CalendarKind::day360).to_seconds(civil(2025, 1, 31)), std::invalid_argument);
  CHECK_NOTHROW(Calendar(CalendarKind::day360).to_seconds(civil(2025, 2, 30)));
  CHECK_THROWS_AS(Calendar(CalendarKind::noleap).to_seconds(civil(2024, 2, 29)), std::invalid_argument);
  CHECK_NOTHROW(Calendar(CalendarKind::all_leap).to_seconds(civil(2023, 2, 29)));
  // CF-1.13 table 4.1: the standard calendar skips 1582-10-05 .. 1582-10-14.
  const Calendar std_cal(CalendarKind::standard);
  CHECK_THROWS_AS(std_cal.to_seconds(civil(1582, 10, 10)), std::invalid_argument);
  CHECK(std_cal.to_seconds(civil(1582, 10, 15)) - std_cal.to_seconds(civil(1582, 10, 4)) == 86400.0);
  // 1900 is a leap year in the Julian calendar, not in the Gregorian one.
  CHECK_NOTHROW(Calendar(CalendarKind::julian).to_seconds(civil(1900, 2, 29)));
  CHECK_THROWS_AS(Calendar(CalendarKind::proleptic_gregorian).to_seconds(civil(1900, 2, 29)), std::invalid_argument);
}

TEST_CASE("calendar names and aliases (CF-1.13 table 4.1)", "[calendar]") {
  CHECK(Calendar::from_name("gregorian").kind() == CalendarKind::standard);
  CHECK(Calendar::from_name("Standard").kind() == CalendarKind::standard);
  CHECK(Calendar::from_name("365_day").kind() == CalendarKind::noleap);
  CHECK(Calendar::from_name("366_day").kind() == CalendarKind::all_leap);
  CHECK(Calendar::from_name("360_day").name() == "360_day");
  CHECK_THROWS_AS(Calendar::from_name("lunar"), std::invalid_argument);
  CHECK_THROWS_AS(Calendar::from_name("none"), std::invalid_argument);
  // Model seconds count from 1970-01-01 in every calendar.
  for (const char* name : kAllCalendars) CHECK(Calendar::from_name(name).to_seconds(civil(1970, 1, 1)) == 0.0);
}

TEST_CASE("CF time units: unit spellings, zones, refusals", "[calendar]") {
  const Calendar c(CalendarKind::standard);
  CHECK(parse_time_units("seconds since 1970-01-01", c).reference_s == 0.0);
  CHECK(parse_time_units("sec since 1970-1-1 0:0:0", c).unit_s == 1.0);
  CHECK(parse_time_units("s since 1970-01-01T00:00:00Z", c).unit_s == 1.0);
  CHECK(parse_time_units("minutes since 1970-01-01", c).unit_s == 60.0);
  CHECK(parse_time_units("hours since 2026-12-01 00:00:00", c).unit_s == 3600.0);
  CHECK(parse_time_units("h since 2026-12-01", c).unit_s == 3600.0);
  CHECK(parse_time_units("days since 2026-12-01", c).unit_s == 86400.0);
  CHECK(parse_time_units("d since 2026-12-01", c).unit_s == 86400.0);
  // A zone offset: 10:00 at +10:00 is 00:00 UTC.
  CHECK(parse_time_units("hours since 1970-01-01 10:00:00 +10:00", c).reference_s == 0.0);
  CHECK(parse_time_units("hours since 1970-01-01 00:00:00 UTC", c).reference_s == 0.0);
  CHECK(parse_time_units("Hours since 2000-01-01 12:00:00.5", c).reference_s ==
        c.to_seconds(civil(2000, 1, 1, 12, 0, 0.5)));
  CHECK_THROWS_AS(parse_time_units("months since 2000-01-01", c), std::invalid_argument);
  CHECK_THROWS_AS(parse_time_units("fortnights since 2000-01-01", c), std::invalid_argument);
  CHECK_THROWS_AS(parse_time_units("hours after 2000-01-01", c), std::invalid_argument);
  CHECK_THROWS_AS(parse_time_units("hours since yesterday", c), std::invalid_argument);
  CHECK_THROWS_AS(parse_time_units("days since 2025-01-31", Calendar(CalendarKind::day360)), std::invalid_argument);
}

TEST_CASE("to_seconds and to_civil agree with cftime across calendars", "[calendar]") {
  // Reference: cftime 1.6 (python3-cftime, Debian 12), date2num/num2date with
  // units "seconds since 1970-01-01 00:00:00" and the same calendar. Years >= 1
  // only (cftime counts real-world calendars without a year 0).
  if (std::system("/usr/bin/python3 -c 'import cftime' 2>/dev/null") != 0) {
    WARN("python3-cftime not installed: cross-check skipped");
    return;
  }
  ScratchDir dir;
  std::mt19937 rng(20261201);
  std::ostringstream in;
  struct Case { std::string cal; CivilTime t; double s; double back_s; };
  std::vector<Case> cases;
  for (const char* name : kAllCalendars) {
    const Calendar cal = Calendar::from_name(name);
    for (int n = 0; n < 250; ++n) {
      CivilTime t;
      t.year = std::uniform_int_distribution<int>(1, 2600)(rng);
      if (n < 20) t.year = 1580 + n;  // around the Gregorian switch
      t.month = std::uniform_int_distribution<int>(1, 12)(rng);
      t.day = std::uniform_int_distribution<int>(1, 28)(rng);
      if (n % 7 == 0) t.day = cal.kind() == CalendarKind::day360 ? 30 : 28 + (n % 3);
      if (t.month == 2 && t.day > 28 && cal.kind() != CalendarKind::day360) t.day = 28;
      if (t.year == 1582 && t.month == 10 && t.day > 4 && t.day < 15) t.day = 3;
      t.hour = std::uniform_int_distribution<int>(0, 23)(rng);
      t.minute = std::uniform_int_distribution<int>(0, 59)(rng);
      t.second = std::uniform_int_distribution<int>(0, 59)(rng);
      const double s = cal.to_seconds(t);
      // A second, unrelated instant for num2date.
      const double back = std::uniform_real_distribution<double>(-60e9, 20e9)(rng);
      cases.push_back({name, t, s, std::floor(back)});
      in << name << " " << t.year << " " << t.month << " " << t.day << " " << t.hour << " " << t.minute << " "
         << static_cast<int>(t.second) << " " << static_cast<long long>(std::floor(back)) << "\n";
    }
  }
  cullcast::currents::testing::write_text(dir / "dates.txt", in.str());
  cullcast::currents::testing::write_text(dir / "ref.py",
      "import sys, cftime\n"
      "u = 'seconds since 1970-01-01 00:00:00'\n"
      "for line in open(sys.argv[1]):\n"
      "    c, y, mo, d, h, mi, s, b = line.split()\n"
      "    dt = cftime.datetime(int(y), int(mo), int(d), int(h), int(mi), int(s), calendar=c)\n"
      "    n = cftime.date2num(dt, u, calendar=c)\n"
      "    r = cftime.num2date(float(b), u, calendar=c)\n"
      "    print(repr(float(n)), r.year, r.month, r.day, r.hour, r.minute, r.second)\n");
  const std::string out = run("/usr/bin/python3 " + (dir / "ref.py").string() + " " + (dir / "dates.txt").string());
  std::istringstream lines(out);
  size_t checked = 0;
  for (const Case& c : cases) {
    double ref_s;
    int y, mo, d, h, mi, s;
    REQUIRE(lines >> ref_s >> y >> mo >> d >> h >> mi >> s);
    INFO(c.cal << " " << format_iso8601(c.t));
    CHECK(c.s == ref_s);
    const CivilTime back = Calendar::from_name(c.cal).to_civil(c.back_s);
    INFO("num2date " << c.back_s);
    CHECK(back == civil(y, mo, d, h, mi, s));
    // And the round trip.
    CHECK(Calendar::from_name(c.cal).to_civil(c.s) == c.t);
    ++checked;
  }
  CHECK(checked == cases.size());
}
