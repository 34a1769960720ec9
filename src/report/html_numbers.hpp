#pragma once
// Numbers as the report pages print them: a dash for a missing value (NaN).
#include <cmath>
#include <cstdio>
#include <string>

namespace cullcast::report {

// `digits` significant digits.
inline std::string html_sig(double v, int digits = 3) {
  if (std::isnan(v)) return "&ndash;";
  char b[64];
  std::snprintf(b, sizeof b, "%.*g", digits, v);
  return b;
}
// `digits` decimals.
inline std::string html_fixed(double v, int digits) {
  if (std::isnan(v)) return "&ndash;";
  char b[64];
  std::snprintf(b, sizeof b, "%.*f", digits, v);
  return b;
}
// `digits` decimals with an explicit sign (changes).
inline std::string html_signed_fixed(double v, int digits) {
  if (std::isnan(v)) return "&ndash;";
  char b[64];
  std::snprintf(b, sizeof b, "%+.*f", digits, v);
  return b;
}

}  // namespace cullcast::report
