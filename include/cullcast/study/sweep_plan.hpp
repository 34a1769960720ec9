#pragma once
// Sweeps: named sets of overrides ([[variant]] blocks), and a grid over one or
// two settings ([sweep] vary, or `cullcast sweep --vary`), each run into its own
// sub-folder of the outputs folder. Overrides use the `--set` form
// "section.key=value" and go through exactly the same checks (docs/scenario.md).
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/study/study.hpp"

namespace cullcast::study {

struct SweepVariant {
  std::string name;  // folder name under the outputs folder ([A-Za-z0-9._-])
  std::vector<std::string>
      overrides;      // "section.key=value", applied after the command line's --set
  std::string where;  // "file:line:column" of its definition, for messages
  std::vector<std::string>
      locations;  // "file:line:column" of each override, when written in the file
};

struct SweepPlan {
  std::filesystem::path outputs_dir;   // the scenario's outputs folder (variants go below it)
  std::vector<SweepVariant> variants;  // "baseline" first when [sweep] baseline = true (default)
};

// Reads [sweep] and [[variant]] from the scenario; `vary` adds grid axes given
// as "section.key=v1,v2,..." (at most two axes in all). Loads every variant's
// study once, so a misspelt key or a bad value fails before anything runs,
// with the variant's name and location. Throws InputError.
SweepPlan read_sweep_plan(const std::filesystem::path& scenario,
                          const std::vector<std::string>& cli_overrides,
                          const std::vector<std::string>& vary);

// The study of one variant: scenario + command-line overrides + the variant's
// overrides + outputs.dir = <plan.outputs_dir>/<name>.
Study load_variant(const std::filesystem::path& scenario,
                   const std::vector<std::string>& cli_overrides, const SweepPlan& plan,
                   const SweepVariant& variant);

// The overrides of a variant that can change the drift (settlement records):
// every section except [connectivity] and [cull], sorted. Two variants with
// equal drift keys drift identically and may share settlement records.
std::vector<std::string> drift_key(const SweepVariant& variant);

// "section.key = value" -> "section.key=value" (blanks around the key and the
// value removed); InputError when there is no '=' or no key.
std::string normalise_override(const std::string& item);

}  // namespace cullcast::study
