#pragma once
// Shared by the tests of single scenario sections: a minimal scenario and a
// loader with file checks off (only the section under test matters). The
// tests take these names with `using namespace cullcast::test;`.
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/base/error.hpp"
#include "cullcast/study/load_study.hpp"

namespace cullcast::test {

inline const std::string kBase = R"([currents]
files = ["currents/*.nc"]
[reefs]
layer = "reefs.geojson"
[[spawning]]
start = "2026-12-08T20:00:00Z"
)";

inline study::Study load(const std::string& text, std::vector<std::string> overrides = {}) {
  study::LoadOptions options;
  options.check_files = false;
  options.overrides = std::move(overrides);
  return study::load_study_text(text, std::filesystem::path("/tmp/cullcast-section-test/s.toml"),
                                options);
}

// The loader's message for a bad scenario, or "no error".
inline std::string error_of(const std::string& text) {
  try {
    load(text);
  } catch (const InputError& e) {
    return e.what();
  }
  return "no error";
}

}  // namespace cullcast::test
