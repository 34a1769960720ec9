#include "cullcast/base/civil_time.hpp"

#include <cmath>
#include <cstdio>
#include <stdexcept>

namespace cullcast {
namespace {

bool is_leap_gregorian(int y) { return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0; }

int days_in_month_gregorian(int y, int m) {
  static constexpr int days[] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
  return (m == 2 && is_leap_gregorian(y)) ? 29 : days[m - 1];
}

class Cursor {
 public:
  explicit Cursor(std::string_view text) : text_(text) {}
  bool done() const { return pos_ >= text_.size(); }
  char peek() const { return done() ? '\0' : text_[pos_]; }
  int digits(int count, const char* what) {
    int value = 0;
    for (int i = 0; i < count; ++i) {
      if (done() || text_[pos_] < '0' || text_[pos_] > '9') {
        throw std::invalid_argument("expected " + std::to_string(count) + " digits for the " +
                                    what + " in '" + std::string(text_) +
                                    "' (ISO 8601 YYYY-MM-DDTHH:MM:SSZ)");
      }
      value = value * 10 + (text_[pos_++] - '0');
    }
    return value;
  }
  void expect(char c, const char* where) {
    if (peek() != c) {
      throw std::invalid_argument(std::string("expected '") + c + "' " + where + " in '" +
                                  std::string(text_) + "' (ISO 8601 YYYY-MM-DDTHH:MM:SSZ)");
    }
    ++pos_;
  }
  bool accept(char c) {
    if (peek() != c) return false;
    ++pos_;
    return true;
  }
  double fraction() {
    double scale = 0.1, value = 0;
    while (!done() && text_[pos_] >= '0' && text_[pos_] <= '9') {
      value += scale * (text_[pos_++] - '0');
      scale *= 0.1;
    }
    return value;
  }
  std::string_view text() const { return text_; }

 private:
  std::string_view text_;
  size_t pos_ = 0;
};

}  // namespace

long long days_from_civil_gregorian(int y, int m, int d) {
  y -= m <= 2;
  const long long era = (y >= 0 ? y : y - 399) / 400;
  const long long yoe = y - era * 400;
  const long long doy = (153 * (m + (m > 2 ? -3 : 9)) + 2) / 5 + d - 1;
  const long long doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
  return era * 146097 + doe - 719468;
}

void civil_from_days_gregorian(long long z, int& year, int& month, int& day) {
  z += 719468;
  const long long era = (z >= 0 ? z : z - 146096) / 146097;
  const long long doe = z - era * 146097;
  const long long yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
  const long long doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
  const long long mp = (5 * doy + 2) / 153;
  day = static_cast<int>(doy - (153 * mp + 2) / 5 + 1);
  month = static_cast<int>(mp < 10 ? mp + 3 : mp - 9);
  year = static_cast<int>(yoe + era * 400 + (month <= 2));
}

CivilTime parse_iso8601(std::string_view text) {
  Cursor in(text);
  CivilTime t;
  t.year = in.digits(4, "year");
  in.expect('-', "after the year");
  t.month = in.digits(2, "month");
  in.expect('-', "after the month");
  t.day = in.digits(2, "day");
  if (t.month < 1 || t.month > 12) {
    throw std::invalid_argument("month " + std::to_string(t.month) + " is not 1..12 in '" +
                                std::string(text) + "'");
  }
  if (t.day < 1 || t.day > 31) {
    throw std::invalid_argument("day " + std::to_string(t.day) + " is not 1..31 in '" +
                                std::string(text) + "'");
  }
  int offset_minutes = 0;
  if (in.accept('T') || in.accept(' ')) {
    t.hour = in.digits(2, "hour");
    in.expect(':', "after the hour");
    t.minute = in.digits(2, "minute");
    if (in.accept(':')) {
      t.second = in.digits(2, "second");
      if (in.accept('.') || in.accept(',')) t.second += in.fraction();
    }
    if (t.hour > 23 || t.minute > 59 || t.second >= 60) {
      throw std::invalid_argument("time of day out of range in '" + std::string(text) + "'");
    }
    if (in.accept('Z') || in.accept('z')) {
    } else if (in.peek() == '+' || in.peek() == '-') {
      const int sign = in.peek() == '+' ? 1 : -1;
      in.accept(in.peek());
      const int oh = in.digits(2, "UTC offset hours");
      in.accept(':');
      const int om = in.digits(2, "UTC offset minutes");
      offset_minutes = sign * (oh * 60 + om);
    }
  }
  if (!in.done()) {
    throw std::invalid_argument("unexpected text after the date-time in '" + std::string(text) +
                                "' (ISO 8601 YYYY-MM-DDTHH:MM:SSZ)");
  }
  if (offset_minutes != 0) {
    if (t.day > days_in_month_gregorian(t.year, t.month)) {
      throw std::invalid_argument("day " + std::to_string(t.day) + " does not exist in month " +
                                  std::to_string(t.month) + " in '" + std::string(text) + "'");
    }
    long long minutes = days_from_civil_gregorian(t.year, t.month, t.day) * 1440LL +
                        t.hour * 60LL + t.minute - offset_minutes;
    long long days = minutes >= 0 ? minutes / 1440 : -((-minutes + 1439) / 1440);
    long long rest = minutes - days * 1440;
    civil_from_days_gregorian(days, t.year, t.month, t.day);
    t.hour = static_cast<int>(rest / 60);
    t.minute = static_cast<int>(rest % 60);
  }
  return t;
}

std::string format_iso8601(const CivilTime& t) {
  char buffer[64];
  const double whole = std::floor(t.second);
  if (t.second == whole) {
    std::snprintf(buffer, sizeof buffer, "%04d-%02d-%02dT%02d:%02d:%02dZ", t.year, t.month, t.day,
                  t.hour, t.minute, static_cast<int>(whole));
  } else {
    std::snprintf(buffer, sizeof buffer, "%04d-%02d-%02dT%02d:%02d:%06.3fZ", t.year, t.month,
                  t.day, t.hour, t.minute, t.second);
  }
  return buffer;
}

}  // namespace cullcast
