#include "csv_rows.hpp"

#include <cmath>
#include <fstream>
#include <limits>
#include <sstream>

#include "cullcast/base/error.hpp"

namespace cullcast::compare::csv {

int Table::column(const std::string& name) const {
  for (std::size_t i = 0; i < header.size(); ++i) {
    if (header[i] == name) return static_cast<int>(i);
  }
  return -1;
}

int Table::require_column(const std::string& name) const {
  const int c = column(name);
  if (c < 0) {
    std::string found;
    for (const auto& h : header) found += (found.empty() ? "" : ",") + h;
    throw InputError(file + " line 1: expected a column '" + name + "', found columns " + found);
  }
  return c;
}

const std::string& Table::at(const Row& row, int column) const {
  if (column < 0 || static_cast<std::size_t>(column) >= row.fields.size()) {
    throw InputError(file + " line " + std::to_string(row.line) + ": expected " +
                     std::to_string(header.size()) + " fields, found " +
                     std::to_string(row.fields.size()));
  }
  return row.fields[static_cast<std::size_t>(column)];
}

double Table::number(const Row& row, int column) const {
  const std::string& text = at(row, column);
  if (text.empty()) return std::numeric_limits<double>::quiet_NaN();
  std::size_t used = 0;
  double v = 0;
  try {
    v = std::stod(text, &used);
  } catch (const std::exception&) {
    used = 0;
  }
  if (used != text.size()) {
    throw InputError(file + " line " + std::to_string(row.line) + ", column '" +
                     header[static_cast<std::size_t>(column)] + "': expected a number, found \"" +
                     text + "\"");
  }
  return v;
}

long long Table::whole(const Row& row, int column) const {
  const double v = number(row, column);
  if (!(v >= 0) || std::floor(v) != v) {
    throw InputError(file + " line " + std::to_string(row.line) + ", column '" +
                     header[static_cast<std::size_t>(column)] +
                     "': expected a whole number >= 0, found \"" + at(row, column) + "\"");
  }
  return static_cast<long long>(v);
}

Table read(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError("cannot read " + path.string() + ": no such file or not readable");
  std::ostringstream all;
  all << in.rdbuf();
  const std::string text = all.str();
  Table t;
  t.file = path.string();
  std::vector<std::vector<std::string>> records;
  std::vector<long> lines;
  std::vector<std::string> fields;
  std::string field;
  bool quoted = false, in_record = false;
  long line = 1, record_line = 1;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    if (!in_record) {
      in_record = true;
      record_line = line;
    }
    if (quoted) {
      if (c == '"') {
        if (i + 1 < text.size() && text[i + 1] == '"') {
          field += '"';
          ++i;
        } else {
          quoted = false;
        }
      } else {
        if (c == '\n') ++line;
        field += c;
      }
      continue;
    }
    if (c == '"') {
      quoted = true;
    } else if (c == ',') {
      fields.push_back(field);
      field.clear();
    } else if (c == '\r') {
      // CRLF: the '\n' ends the record
    } else if (c == '\n') {
      fields.push_back(field);
      field.clear();
      if (!(fields.size() == 1 && fields[0].empty())) {
        records.push_back(fields);
        lines.push_back(record_line);
      }
      fields.clear();
      in_record = false;
      ++line;
    } else {
      field += c;
    }
  }
  if (quoted)
    throw InputError(t.file + " line " + std::to_string(record_line) + ": a quote is not closed");
  if (in_record) {
    fields.push_back(field);
    if (!(fields.size() == 1 && fields[0].empty())) {
      records.push_back(fields);
      lines.push_back(record_line);
    }
  }
  if (records.empty()) throw InputError(t.file + ": empty file, expected a header line");
  t.header = records.front();
  for (std::size_t r = 1; r < records.size(); ++r) {
    // Tolerate trailing empty fields: connectivity.csv's per-event rows carry
    // one empty field more than its header (cullcast 0.1.0).
    while (records[r].size() > t.header.size() && records[r].back().empty()) records[r].pop_back();
    if (records[r].size() != t.header.size()) {
      throw InputError(t.file + " line " + std::to_string(lines[r]) + ": expected " +
                       std::to_string(t.header.size()) + " fields, found " +
                       std::to_string(records[r].size()));
    }
    t.rows.push_back(Row{lines[r], std::move(records[r])});
  }
  return t;
}

}  // namespace cullcast::compare::csv
