#pragma once
// Positional arguments of the small benchmarks: a number or the default;
// anything else (or -h, --help) prints the usage line and exits with 2,
// never an uncaught exception.
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>

namespace cullcast::bench {

inline void usage_and_exit(const char* usage, int code) {
  std::fprintf(code == 0 ? stdout : stderr, "usage: %s\n", usage);
  std::exit(code);
}

inline void help_if_asked(int argc, char** argv, const char* usage) {
  for (int i = 1; i < argc; ++i) {
    if (!std::strcmp(argv[i], "-h") || !std::strcmp(argv[i], "--help")) usage_and_exit(usage, 0);
  }
}

// argv[i] as a number in [lo, hi], or `fallback` when absent.
inline double number_arg(int argc, char** argv, int i, double fallback, double lo, double hi,
                         const char* usage) {
  if (i >= argc) return fallback;
  char* end = nullptr;
  errno = 0;
  const double v = std::strtod(argv[i], &end);
  if (end == argv[i] || *end != '\0' || errno != 0 || !std::isfinite(v) || v < lo || v > hi) {
    std::fprintf(stderr, "argument %d: expected a number from %g to %g, found \"%s\"\n", i, lo, hi,
                 argv[i]);
    usage_and_exit(usage, 2);
  }
  return v;
}

}  // namespace cullcast::bench
