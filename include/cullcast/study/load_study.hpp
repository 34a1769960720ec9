#pragma once
// Scenario file (TOML) -> validated Study. Every key is documented in
// docs/scenario.md. Errors are InputError with "file:line:column: [section] key: ..."
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/study/study.hpp"

namespace cullcast::study {

struct LoadOptions {
  std::vector<std::string> overrides;  // "section.key=value" items from --set
  bool check_files = true;  // expand currents globs and require every named file to exist
};

Study load_study(const std::filesystem::path& scenario_file, const LoadOptions& options = {});

// Same, from text already in memory; `source_name` is used in messages and its
// folder for relative paths.
Study load_study_text(const std::string& text, const std::filesystem::path& source_name,
                      const LoadOptions& options = {});

// A commented starter scenario that load_study() accepts as is.
std::string scenario_template();

}  // namespace cullcast::study
