#pragma once
// Numbers as text for the command line's messages, tables and CSV files.
#include <cmath>
#include <cstdio>
#include <string>

namespace cullcast::cli {

// `v` with `digits` decimals ("%.*f"); NaN as `nan_text` when one is given
// (a table's "-", a summary's "n/a", a CSV's empty field).
inline std::string fixed_text(double v, int digits, const char* nan_text = nullptr) {
  if (nan_text != nullptr && std::isnan(v)) return nan_text;
  char b[352];  // the widest double with 17 decimals fits
  std::snprintf(b, sizeof b, "%.*f", digits, v);
  return b;
}

}  // namespace cullcast::cli
