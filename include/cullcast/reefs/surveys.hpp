#pragma once
// Adult starfish surveys per reef, read from CSV (format in docs/reefs.md):
//
//   reef_id,density_per_ha,surveyed_on,count_0_15cm,count_15_25cm,count_25cm_plus,notes
//   LR-01,22.5,2025-10-14,3,12,9,"north flank, poor visibility"
//
// reef_id and density_per_ha (adults per hectare) are required; surveyed_on
// (ISO 8601 date), size-class counts and a free-text notes column are optional.
// Size classes: count_<lo>_<hi>cm counts animals with lo <= diameter < hi (cm);
// count_<lo>cm_plus counts diameter >= lo. Classes must not overlap.
#include <filesystem>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include "cullcast/base/civil_time.hpp"
#include "cullcast/reefs/reef_set.hpp"

namespace cullcast::reefs {

struct SizeClass {
  double min_cm = 0;                                        // diameter lower bound, cm (inclusive)
  double max_cm = std::numeric_limits<double>::infinity();  // upper bound, cm (exclusive)
  std::string column;                                       // header as written
};

struct Survey {
  int reef_index = -1;                      // into the ReefSet
  double density_per_ha = 0;                // adults per hectare
  std::optional<CivilTime> surveyed_on;     // UTC
  std::vector<std::optional<double>> counts;  // per SurveyTable::classes; empty field = not recorded
  long line = 0;                            // line in the CSV, for messages
};

struct SurveyTable {
  std::filesystem::path file;
  std::vector<SizeClass> classes;  // sorted by min_cm
  std::vector<Survey> rows;        // file order; at most one per reef
};

// Reads and checks a survey table against the reef set. InputError naming
// file, line and column for: unknown reef id (closest id suggested), negative,
// NaN or non-numeric values, a missing required column, a duplicate reef row,
// an unreadable date, a malformed or overlapping size-class column.
SurveyTable load_surveys(const std::filesystem::path& file, const ReefSet& reefs);

// Adults per hectare for every reef. Unsurveyed reefs follow `policy`:
// "zero" -> 0; "regional_mean" -> area-weighted mean density of the surveyed
// reefs (sum of density x area / sum of area); "refuse" -> InputError listing
// the unsurveyed reefs.
std::vector<double> reef_densities(const ReefSet& reefs, const SurveyTable& table,
                                   const std::string& policy);

}  // namespace cullcast::reefs
