// Regression cases found by fuzzing the CF time-units parser and the calendars
// (tests/fuzz/fuzz_cf_time.cpp). Every bad text must throw
// std::invalid_argument (the documented error); before the fixes these hit
// signed overflow (undefined behaviour), std::out_of_range, or silently
// wrapped a huge hour to a small one.
#include <catch2/catch.hpp>

#include <climits>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <string>

#include "cullcast/base/error.hpp"
#include "cullcast/currents/calendar.hpp"
#include "cullcast/currents/cf_time.hpp"
#include "cullcast/currents/current_field.hpp"
#include "currents_test_util.hpp"

using namespace cullcast;
using namespace cullcast::currents;

TEST_CASE("time units with absurdly long numbers are refused, not overflowed") {
  const Calendar standard(CalendarKind::standard), proleptic(CalendarKind::proleptic_gregorian);
  // The first fuzzing crash (tests/fuzz/corpus/cf_time/found-long-year-overflow):
  // a 35-digit year overflowed long long while it was read.
  CHECK_THROWS_AS(parse_time_units("seconds since 19755555555555555555555555555555550-1\xf8-100Z", proleptic),
                  std::invalid_argument);
  CHECK_THROWS_AS(parse_time_units("days since " + std::string(40, '9') + "-01-01", standard), std::invalid_argument);
  CHECK_THROWS_AS(parse_time_units("days since 2026-" + std::string(30, '1') + "-01", standard), std::invalid_argument);
  // 400 digits of seconds: std::stod threw std::out_of_range.
  CHECK_THROWS_AS(parse_time_units("hours since 2026-12-01 00:00:" + std::string(400, '9'), standard),
                  std::invalid_argument);
  CHECK_THROWS_AS(parse_time_units("hours since 2026-12-01 00:00:.", standard), std::invalid_argument);
  CHECK_THROWS_AS(parse_time_units("hours since 2026-12-01 00:00:1.2.3", standard), std::invalid_argument);
  // 4294967301 = 2^32 + 5 became hour 5 after the cast to int.
  CHECK_THROWS_AS(parse_time_units("hours since 2026-12-01 4294967301:00", standard), std::invalid_argument);
  CHECK_THROWS_AS(parse_time_units("hours since 2026-12-01 00:4294967301", standard), std::invalid_argument);
}

TEST_CASE("years are supported up to kMaxCalendarYear either way") {
  for (CalendarKind kind : {CalendarKind::standard, CalendarKind::proleptic_gregorian, CalendarKind::julian,
                            CalendarKind::noleap, CalendarKind::all_leap, CalendarKind::day360}) {
    const Calendar c(kind);
    INFO(c.name());
    const std::string max = std::to_string(kMaxCalendarYear);
    const TimeUnits far = parse_time_units("days since " + max + "-01-01", c);
    CHECK(c.to_civil(far.reference_s).year == kMaxCalendarYear);
    const TimeUnits early = parse_time_units("days since -" + max + "-03-01", c);
    CHECK(c.to_civil(early.reference_s).year == -kMaxCalendarYear);
    CHECK_THROWS_AS(parse_time_units("days since " + std::to_string(kMaxCalendarYear + 1) + "-01-01", c),
                    std::invalid_argument);
    CivilTime t;
    t.year = INT_MAX;
    CHECK_THROWS_AS(c.to_seconds(t), std::invalid_argument);
    t.year = INT_MIN;
    CHECK_THROWS_AS(c.to_seconds(t), std::invalid_argument);
    // Seconds that are not finite or far beyond the supported years: the casts
    // to whole days were undefined behaviour.
    for (double s : {std::numeric_limits<double>::quiet_NaN(), std::numeric_limits<double>::infinity(),
                     -std::numeric_limits<double>::infinity(), 1e300, -1e300}) {
      CHECK_THROWS_AS(c.to_civil(s), std::invalid_argument);
    }
  }
}

TEST_CASE("a currents file whose times lie beyond the supported years is bad input") {
  // Finite values (read_all refuses NaN) that land past year 1,000,000:
  // formatting them for messages was undefined behaviour before.
  using namespace cullcast::currents::testing;
  ScratchDir dir;
  RegularSpec spec;
  spec.lon = {150, 150.5, 151};
  spec.lat = {-20.5, -20, -19.5};
  spec.time = {0, 1e300, 2e300};
  spec.time_units = "days since 2026-12-01";
  const std::string file = ncgen(dir, "far", regular_cdl(spec));
  study::CurrentsSettings settings;
  settings.files.emplace_back(file);
  try {
    (void)CurrentField::open(settings);
    FAIL("no error");
  } catch (const InputError& e) {
    CHECK_THAT(e.what(), Catch::Matchers::Contains("far.nc") && Catch::Matchers::Contains("time value") &&
                             Catch::Matchers::Contains("beyond year"));
  }
}
