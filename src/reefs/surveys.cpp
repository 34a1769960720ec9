#include "cullcast/reefs/surveys.hpp"

#include <algorithm>
#include <cctype>
#include <cstdlib>
#include <map>
#include <stdexcept>

#include "cullcast/base/error.hpp"
#include "cullcast/base/suggest.hpp"
#include "csv_table.hpp"

namespace cullcast::reefs {
namespace {

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
  return s;
}

std::vector<std::string> all_ids(const ReefSet& reefs) {
  std::vector<std::string> ids;
  ids.reserve(reefs.size());
  for (const auto& r : reefs.reefs()) ids.push_back(r.id);
  return ids;
}

// A size-class bound in a column name: digits with an optional fraction, at
// most 9 characters so it stays a plain number (a diameter in cm). Returns the
// value and moves `pos` past it, or -1 when there is none.
double read_bound(const std::string& s, std::size_t& pos) {
  const std::size_t start = pos;
  while (pos < s.size() && std::isdigit(static_cast<unsigned char>(s[pos]))) ++pos;
  if (pos == start) return -1;
  if (pos + 1 < s.size() && s[pos] == '.' && std::isdigit(static_cast<unsigned char>(s[pos + 1]))) {
    ++pos;
    while (pos < s.size() && std::isdigit(static_cast<unsigned char>(s[pos]))) ++pos;
  }
  if (pos - start > 9) return -1;
  return std::strtod(s.substr(start, pos - start).c_str(), nullptr);
}

// "count_<lo>_<hi>cm" or "count_<lo>cm_plus" (lower case). A hand-written
// matcher: std::regex recurses once per character and overflowed the stack
// on a very long column name (found by fuzzing).
bool parse_size_class(const std::string& name, SizeClass& sc) {
  const std::string prefix = "count_";
  if (name.rfind(prefix, 0) != 0) return false;
  std::size_t p = prefix.size();
  const double lo = read_bound(name, p);
  if (lo < 0) return false;
  if (name.compare(p, std::string::npos, "cm_plus") == 0) {
    sc.min_cm = lo;
    return true;
  }
  if (p >= name.size() || name[p] != '_') return false;
  ++p;
  const double hi = read_bound(name, p);
  if (hi < 0 || name.compare(p, std::string::npos, "cm") != 0) return false;
  sc.min_cm = lo;
  sc.max_cm = hi;
  return true;
}

}  // namespace

SurveyTable load_surveys(const std::filesystem::path& file, const ReefSet& reefs) {
  const csv::Table t = csv::read(file);
  SurveyTable table;
  table.file = file;
  const int id_col = t.require_column("reef_id");
  const int density_col = t.require_column("density_per_ha");
  const int date_col = t.column("surveyed_on");

  // Size classes and unknown columns.
  std::vector<int> class_cols;
  for (std::size_t c = 0; c < t.header.size(); ++c) {
    const std::string name = lower(t.header[c]);
    if (name == "reef_id" || name == "density_per_ha" || name == "surveyed_on" || name == "notes") {
      if (t.column(name) != static_cast<int>(c)) {
        throw InputError(t.file + " line 1: column \"" + t.header[c] + "\" appears twice");
      }
      continue;
    }
    SizeClass sc;
    sc.column = t.header[c];
    if (parse_size_class(name, sc)) {
      if (!(sc.max_cm > sc.min_cm)) {
        throw InputError(t.file + " line 1: column \"" + t.header[c] +
                         "\": size class upper bound must exceed the lower bound (count_<lo>_<hi>cm)");
      }
    } else {
      std::string message = t.file + " line 1: unknown column \"" + t.header[c] +
                            "\"; expected reef_id, density_per_ha, surveyed_on, notes, "
                            "count_<lo>_<hi>cm or count_<lo>cm_plus";
      const std::string close = closest_match(name, {"reef_id", "density_per_ha", "surveyed_on", "notes"});
      if (!close.empty()) message += "; did you mean \"" + close + "\"?";
      throw InputError(message);
    }
    table.classes.push_back(sc);
    class_cols.push_back(static_cast<int>(c));
  }
  // Sort classes by lower bound and check they do not overlap.
  std::vector<std::size_t> order(table.classes.size());
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::sort(order.begin(), order.end(),
            [&](std::size_t a, std::size_t b) { return table.classes[a].min_cm < table.classes[b].min_cm; });
  for (std::size_t i = 1; i < order.size(); ++i) {
    const SizeClass& prev = table.classes[order[i - 1]];
    const SizeClass& next = table.classes[order[i]];
    if (next.min_cm < prev.max_cm) {
      throw InputError(t.file + " line 1: size classes \"" + prev.column + "\" and \"" + next.column +
                       "\" overlap");
    }
  }
  std::vector<SizeClass> sorted;
  std::vector<int> sorted_cols;
  for (std::size_t i : order) {
    sorted.push_back(table.classes[i]);
    sorted_cols.push_back(class_cols[i]);
  }
  table.classes = std::move(sorted);

  const std::vector<std::string> ids = all_ids(reefs);
  std::map<int, long> seen;  // reef index -> line
  for (const auto& row : t.rows) {
    Survey s;
    s.line = row.line;
    const std::string& id = row.fields[static_cast<std::size_t>(id_col)];
    if (id.empty()) throw InputError(t.where(row, id_col) + ": expected a reef id, found an empty field");
    s.reef_index = reefs.index_of(id);
    if (s.reef_index < 0) {
      std::string message = t.where(row, id_col) + ": unknown reef id \"" + id + "\" (not in the reef layer)";
      const std::string close = closest_match(id, ids);
      if (!close.empty()) message += "; did you mean \"" + close + "\"?";
      throw InputError(message);
    }
    if (const auto it = seen.find(s.reef_index); it != seen.end()) {
      throw InputError(t.where(row, id_col) + ": reef \"" + id + "\" already has a survey on line " +
                       std::to_string(it->second) + "; expected one row per reef");
    }
    seen.emplace(s.reef_index, row.line);
    s.density_per_ha = t.non_negative(row, density_col, "adults per hectare");
    if (date_col >= 0 && !row.fields[static_cast<std::size_t>(date_col)].empty()) {
      try {
        s.surveyed_on = parse_iso8601(row.fields[static_cast<std::size_t>(date_col)]);
      } catch (const std::invalid_argument& e) {
        throw InputError(t.where(row, date_col) + ": expected an ISO 8601 date (YYYY-MM-DD), found \"" +
                         row.fields[static_cast<std::size_t>(date_col)] + "\": " + e.what());
      }
    }
    for (int col : sorted_cols) {
      if (row.fields[static_cast<std::size_t>(col)].empty()) {
        s.counts.emplace_back();  // not recorded
      } else {
        s.counts.emplace_back(t.non_negative(row, col, "a count of animals"));
      }
    }
    table.rows.push_back(std::move(s));
  }
  if (table.rows.empty()) throw InputError(t.file + ": has a header but no survey rows");
  return table;
}

std::vector<double> reef_densities(const ReefSet& reefs, const SurveyTable& table,
                                   const std::string& policy) {
  std::vector<double> density(reefs.size(), 0.0);
  std::vector<bool> surveyed(reefs.size(), false);
  double adults = 0, area = 0;
  for (const auto& s : table.rows) {
    const auto k = static_cast<std::size_t>(s.reef_index);
    density[k] = s.density_per_ha;
    surveyed[k] = true;
    adults += s.density_per_ha * reefs.reefs()[k].area_ha;
    area += reefs.reefs()[k].area_ha;
  }
  std::vector<std::string> missing;
  for (std::size_t k = 0; k < reefs.size(); ++k) {
    if (!surveyed[k]) missing.push_back(reefs.reefs()[k].id);
  }
  if (missing.empty()) return density;
  if (policy == "zero") return density;
  if (policy == "regional_mean") {
    const double mean = area > 0 ? adults / area : 0.0;
    for (std::size_t k = 0; k < reefs.size(); ++k) {
      if (!surveyed[k]) density[k] = mean;
    }
    return density;
  }
  if (policy == "refuse") {
    std::string list;
    for (std::size_t i = 0; i < missing.size() && i < 10; ++i) list += (i ? ", " : "") + missing[i];
    if (missing.size() > 10) list += ", ... (" + std::to_string(missing.size()) + " in all)";
    throw InputError(table.file.string() + ": no survey row for " + std::to_string(missing.size()) +
                     " reef(s): " + list +
                     " ([reefs] missing_survey = \"refuse\"; use \"zero\" or \"regional_mean\" to fill them)");
  }
  throw InputError("[reefs] missing_survey: expected zero, regional_mean or refuse, found \"" + policy + "\"");
}

}  // namespace cullcast::reefs
