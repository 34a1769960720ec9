#include "cullcast/base/byte_size.hpp"

#include <cctype>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <stdexcept>

namespace cullcast {

std::uint64_t parse_byte_size(std::string_view text) {
  const std::string s(text);
  auto bad = [&](const std::string& why) {
    return std::invalid_argument("size '" + s + "': " + why +
                                 " (expected e.g. 2GiB, 512MiB, 1.5G or a number of bytes)");
  };
  std::size_t p = 0;
  while (p < s.size() && std::isspace(static_cast<unsigned char>(s[p]))) ++p;
  if (p == s.size()) throw bad("empty");
  if (s[p] == '-') throw bad("negative");
  if (!std::isdigit(static_cast<unsigned char>(s[p])) && s[p] != '.') throw bad("no number");
  char* end = nullptr;
  errno = 0;
  const double number = std::strtod(s.c_str() + p, &end);
  if (end == s.c_str() + p || errno == ERANGE || !std::isfinite(number)) throw bad("no number");
  std::string unit(end);
  while (!unit.empty() && std::isspace(static_cast<unsigned char>(unit.front()))) unit.erase(unit.begin());
  while (!unit.empty() && std::isspace(static_cast<unsigned char>(unit.back()))) unit.pop_back();
  std::string u;
  for (char c : unit) u += static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  if (u.size() > 1 && u.back() == 'b') u.pop_back();  // "GiB" -> "gi", "MB" -> "m"
  double factor = 0;
  if (u.empty() || u == "b") factor = 1;
  else if (u == "k") factor = 1e3;
  else if (u == "m") factor = 1e6;
  else if (u == "g") factor = 1e9;
  else if (u == "t") factor = 1e12;
  else if (u == "ki") factor = 1024.0;
  else if (u == "mi") factor = 1024.0 * 1024.0;
  else if (u == "gi") factor = 1024.0 * 1024.0 * 1024.0;
  else if (u == "ti") factor = 1024.0 * 1024.0 * 1024.0 * 1024.0;
  else throw bad("unknown unit '" + unit + "'");
  const double bytes = std::round(number * factor);
  if (!(bytes < 9.2e18)) throw bad("too large");
  return static_cast<std::uint64_t>(bytes);
}

std::string format_bytes(std::uint64_t bytes) {
  static const char* const kUnits[] = {"B", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"};
  double v = static_cast<double>(bytes);
  int u = 0;
  while (v >= 1024.0 && u < 6) {
    v /= 1024.0;
    ++u;
  }
  char buffer[32];
  if (u == 0) std::snprintf(buffer, sizeof buffer, "%llu B", static_cast<unsigned long long>(bytes));
  else std::snprintf(buffer, sizeof buffer, v < 10 ? "%.2f %s" : v < 100 ? "%.1f %s" : "%.0f %s", v, kUnits[u]);
  return buffer;
}

}  // namespace cullcast
