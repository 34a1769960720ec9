#include "csv_table.hpp"

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <sstream>

#include "cullcast/base/error.hpp"
#include "cullcast/base/suggest.hpp"

namespace cullcast::reefs::csv {
namespace {

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
  return s;
}

std::string trim(const std::string& s) {
  const auto first = s.find_first_not_of(" \t");
  if (first == std::string::npos) return {};
  const auto last = s.find_last_not_of(" \t");
  return s.substr(first, last - first + 1);
}

}  // namespace

Table read(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError("cannot open " + path.string() + " for reading");
  std::ostringstream buffer;
  buffer << in.rdbuf();
  return parse(buffer.str(), path.string());
}

Table parse(std::string text, const std::string& file) {
  Table table;
  table.file = file;
  if (text.rfind("\xEF\xBB\xBF", 0) == 0) text.erase(0, 3);  // UTF-8 byte-order mark

  std::vector<Row> records;
  Row current;
  std::string field;
  bool quoted = false, in_quotes = false, any = false;
  long line = 1;
  current.line = 1;
  auto end_field = [&] {
    current.fields.push_back(quoted ? field : trim(field));
    field.clear();
    quoted = false;
  };
  auto end_record = [&] {
    end_field();
    const bool blank = std::all_of(current.fields.begin(), current.fields.end(),
                                   [](const std::string& f) { return f.empty(); });
    if (!blank) records.push_back(std::move(current));
    current = Row{};
  };
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    any = true;
    if (in_quotes) {
      if (c == '"') {
        if (i + 1 < text.size() && text[i + 1] == '"') {
          field += '"';
          ++i;
        } else {
          in_quotes = false;
        }
      } else {
        if (c == '\n') ++line;
        if (!(c == '\r' && i + 1 < text.size() && text[i + 1] == '\n')) field += c;
      }
    } else if (c == '"' && trim(field).empty()) {
      in_quotes = true;
      quoted = true;
      field.clear();
    } else if (c == ',') {
      end_field();
    } else if (c == '\r' || c == '\n') {
      if (c == '\r' && i + 1 < text.size() && text[i + 1] == '\n') ++i;
      end_record();
      ++line;
      current.line = line;
    } else if (quoted) {
      if (c != ' ' && c != '\t') {
        throw InputError(table.file + " line " + std::to_string(line) +
                         ": unexpected character after a closing quote");
      }
    } else {
      field += c;
    }
  }
  if (in_quotes) {
    throw InputError(table.file + " line " + std::to_string(current.line) +
                     ": a quoted field is not closed before the end of the file");
  }
  if (any && (!field.empty() || quoted || !current.fields.empty())) end_record();

  if (records.empty()) throw InputError(table.file + ": is empty; expected a header line");
  table.header = records.front().fields;
  for (std::size_t i = 1; i < records.size(); ++i) {
    if (records[i].fields.size() != table.header.size()) {
      throw InputError(table.file + " line " + std::to_string(records[i].line) + ": expected " +
                       std::to_string(table.header.size()) + " fields (as in the header), found " +
                       std::to_string(records[i].fields.size()));
    }
    table.rows.push_back(std::move(records[i]));
  }
  return table;
}

int Table::column(const std::string& name) const {
  const std::string wanted = lower(name);
  for (std::size_t i = 0; i < header.size(); ++i) {
    if (lower(header[i]) == wanted) return static_cast<int>(i);
  }
  return -1;
}

int Table::require_column(const std::string& name) const {
  const int index = column(name);
  if (index >= 0) return index;
  std::string found;
  for (const auto& h : header) found += (found.empty() ? "" : ", ") + h;
  std::string message = file + " line 1: missing column \"" + name + "\"; columns found: " + found;
  const std::string close = closest_match(name, header);
  if (!close.empty()) message += "; did you mean \"" + close + "\"?";
  throw InputError(message);
}

std::string Table::where(const Row& row, int column) const {
  return file + " line " + std::to_string(row.line) + ", column \"" +
         header[static_cast<std::size_t>(column)] + "\"";
}

double Table::number_in(const Row& row, int column, double lo, double hi, const std::string& what) const {
  const std::string& text = row.fields[static_cast<std::size_t>(column)];
  if (text.empty()) throw InputError(where(row, column) + ": expected " + what + ", found an empty field");
  char* end = nullptr;
  errno = 0;
  const double value = std::strtod(text.c_str(), &end);
  if (end == text.c_str() || *end != '\0' || errno == ERANGE || !std::isfinite(value)) {
    throw InputError(where(row, column) + ": expected " + what + " (a finite number), found \"" + text + "\"");
  }
  if (value < lo || value > hi) {
    std::ostringstream range;
    range << lo << " to " << hi;
    throw InputError(where(row, column) + ": expected " + what + " from " + range.str() + ", found " + text);
  }
  return value;
}

double Table::non_negative(const Row& row, int column, const std::string& what) const {
  const std::string& text = row.fields[static_cast<std::size_t>(column)];
  if (!text.empty() && text[0] == '-') {
    throw InputError(where(row, column) + ": expected " + what + " >= 0, found " + text);
  }
  return number_in(row, column, 0, std::numeric_limits<double>::max(), what + " >= 0");
}

}  // namespace cullcast::reefs::csv
