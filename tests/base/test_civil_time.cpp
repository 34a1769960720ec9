#include <catch2/catch.hpp>

#include <stdexcept>

#include "cullcast/base/civil_time.hpp"

using cullcast::CivilTime;
using cullcast::parse_iso8601;

TEST_CASE("ISO 8601 date-times parse to UTC") {
  CHECK(parse_iso8601("2026-12-08T20:00:00Z") == CivilTime{2026, 12, 8, 20, 0, 0.0});
  CHECK(parse_iso8601("2026-12-08") == CivilTime{2026, 12, 8, 0, 0, 0.0});
  CHECK(parse_iso8601("2026-12-08T20:30") == CivilTime{2026, 12, 8, 20, 30, 0.0});
  CHECK(parse_iso8601("2026-12-08 20:00:01.5") == CivilTime{2026, 12, 8, 20, 0, 1.5});
  // Offsets cross day, month and year boundaries (ISO 8601-1:2019 §4.3.13).
  CHECK(parse_iso8601("2027-01-01T06:00:00+10:00") == CivilTime{2026, 12, 31, 20, 0, 0.0});
  CHECK(parse_iso8601("2024-02-28T22:00:00-03:00") == CivilTime{2024, 2, 29, 1, 0, 0.0});
  CHECK(parse_iso8601("2024-03-01T00:30:00+0100") == CivilTime{2024, 2, 29, 23, 30, 0.0});
}

TEST_CASE("malformed ISO 8601 text is refused with a reason") {
  CHECK_THROWS_AS(parse_iso8601("08/12/2026"), std::invalid_argument);
  CHECK_THROWS_AS(parse_iso8601("2026-12-08T25:00:00Z"), std::invalid_argument);
  CHECK_THROWS_AS(parse_iso8601("2026-12-08T20:00:00Zjunk"), std::invalid_argument);
  CHECK_THROWS_AS(parse_iso8601("2026-00-08"), std::invalid_argument);
  CHECK_THROWS_AS(parse_iso8601("2026-02-30T23:00:00+01:00"), std::invalid_argument);
}

TEST_CASE("proleptic Gregorian day numbers") {
  // 1970-01-01 is day 0; 2000-03-01 is day 11017 (Unix time 951868800 / 86400,
  // POSIX.1-2017 §4.16 "Seconds Since the Epoch" formula).
  CHECK(cullcast::days_from_civil_gregorian(1970, 1, 1) == 0);
  CHECK(cullcast::days_from_civil_gregorian(2000, 3, 1) == 11017);
  CHECK(cullcast::days_from_civil_gregorian(1969, 12, 31) == -1);
  for (long long d = -800000; d < 800000; d += 997) {
    int y, m, dd;
    cullcast::civil_from_days_gregorian(d, y, m, dd);
    REQUIRE(cullcast::days_from_civil_gregorian(y, m, dd) == d);
  }
}
