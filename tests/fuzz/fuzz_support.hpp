#pragma once
// Helpers shared by the libFuzzer targets (tests/fuzz, DEVELOPERS.md "Fuzzing").
// The contract every target checks: an input either loads or throws the
// documented error type; any other exception escapes, and libFuzzer reports
// it as a crash (like a sanitizer report, a timeout or running out of memory).
#include <unistd.h>

#include <cstddef>
#include <cstdio>
#include <cstdlib>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <string>
#include <stdexcept>
#include <string_view>
#include <vector>

namespace cullcast_fuzz {

inline std::string_view as_text(const std::uint8_t* data, std::size_t size) {
  return {reinterpret_cast<const char*>(data), size};
}

// Splits at the first line "----": what comes before, and the lines after it.
inline std::string_view split_off_lines(std::string_view text, std::vector<std::string>& lines) {
  constexpr std::string_view kMark = "\n----\n";
  const std::size_t at = text.find(kMark);
  if (at == std::string_view::npos) return text;
  std::string_view rest = text.substr(at + kMark.size());
  while (!rest.empty()) {
    const std::size_t end = rest.find('\n');
    lines.emplace_back(rest.substr(0, end));
    if (end == std::string_view::npos) break;
    rest.remove_prefix(end + 1);
  }
  return text.substr(0, at);
}

// An expected error: silent, or printed when CULLCAST_FUZZ_VERBOSE is set
// (to see why a seed is refused: CULLCAST_FUZZ_VERBOSE=1 fuzz_x seed_file).
inline void expected(const std::exception& e) {
  static const bool verbose = std::getenv("CULLCAST_FUZZ_VERBOSE") != nullptr;
  if (verbose) std::fprintf(stderr, "expected error: %s\n", e.what());
}

// For loaders that only take a path: one scratch file per fuzzing process,
// in memory (/dev/shm) when there is one: opening a file on a busy disk took
// seconds and showed up as false timeouts.
inline std::filesystem::path scratch_file(std::string_view text, const std::string& suffix) {
  struct Scratch {
    std::filesystem::path path;
    ~Scratch() {  // at exit (libFuzzer ends with exit())
      std::error_code ignored;
      std::filesystem::remove(path, ignored);
    }
  };
  static const Scratch scratch{[&] {
    std::error_code error;
    const std::filesystem::path shm("/dev/shm");
    const auto dir = std::filesystem::is_directory(shm, error) && ::access(shm.c_str(), W_OK) == 0
                         ? shm
                         : std::filesystem::temp_directory_path();
    return dir / ("cullcast-fuzz-" + std::to_string(::getpid()) + suffix);
  }()};
  std::ofstream out(scratch.path, std::ios::binary | std::ios::trunc);
  out.write(text.data(), static_cast<std::streamsize>(text.size()));
  return scratch.path;
}

}  // namespace cullcast_fuzz
