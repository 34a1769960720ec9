// libFuzzer target: CF time units "<unit> since <date>" (CF-1.13 §4.4), the
// calendars (§4.4.1) and ISO 8601 times. The first byte picks the calendar.
// Expected: a value or std::invalid_argument (the documented error; the
// callers add file and variable and turn it into InputError).
#include <stdexcept>

#include "cullcast/base/civil_time.hpp"
#include "cullcast/currents/calendar.hpp"
#include "cullcast/currents/cf_time.hpp"
#include "fuzz_support.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace cullcast::currents;
  if (size == 0) return 0;
  constexpr CalendarKind kinds[] = {CalendarKind::standard, CalendarKind::proleptic_gregorian,
                                    CalendarKind::julian,   CalendarKind::noleap,
                                    CalendarKind::all_leap, CalendarKind::day360};
  const Calendar calendar(kinds[data[0] % 6]);
  const std::string_view text = cullcast_fuzz::as_text(data + 1, size - 1);
  try {
    const TimeUnits units = parse_time_units(text, calendar);
    (void)calendar.to_civil(units.reference_s);
    (void)calendar.to_civil(units.reference_s + 1000.0 * units.unit_s);
  } catch (const std::invalid_argument& e) {
    cullcast_fuzz::expected(e);
  }
  try {
    (void)Calendar::from_name(text);
  } catch (const std::invalid_argument& e) {
    cullcast_fuzz::expected(e);
  }
  try {
    const cullcast::CivilTime t = cullcast::parse_iso8601(text);
    (void)cullcast::format_iso8601(t);
    (void)calendar.to_civil(calendar.to_seconds(t));
  } catch (const std::invalid_argument& e) {
    cullcast_fuzz::expected(e);
  }
  return 0;
}
