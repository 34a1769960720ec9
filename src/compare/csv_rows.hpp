#pragma once
// Private: reads the CSV files cullcast itself writes (RFC 4180 quoting, LF or
// CRLF), keeping line numbers so that errors name file, line and column.
#include <filesystem>
#include <string>
#include <vector>

namespace cullcast::compare::csv {

struct Row {
  long line = 0;  // 1-based line of the record
  std::vector<std::string> fields;
};

struct Table {
  std::string file;
  std::vector<std::string> header;
  std::vector<Row> rows;

  int column(const std::string& name) const;          // -1 when absent
  int require_column(const std::string& name) const;  // InputError when absent
  const std::string& at(const Row& row, int column) const;
  double number(const Row& row, int column) const;    // InputError unless a number ("" = NaN)
  long long whole(const Row& row, int column) const;  // InputError unless a whole number >= 0
};

Table read(const std::filesystem::path& path);

}  // namespace cullcast::compare::csv
