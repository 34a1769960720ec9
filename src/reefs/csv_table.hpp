#pragma once
// A small RFC 4180 CSV reader for the survey and detection tables: UTF-8
// byte-order mark skipped, CRLF or LF line ends, quoted fields with "" for a
// quote and line breaks inside quotes. Every row remembers its line number so
// errors can name file, line and column.
#include <filesystem>
#include <string>
#include <vector>

namespace cullcast::reefs::csv {

struct Row {
  long line = 0;                    // 1-based line where the record starts
  std::vector<std::string> fields;  // trimmed of surrounding blanks when unquoted
};

struct Table {
  std::string file;                 // as shown in messages
  std::vector<std::string> header;  // column names, trimmed, as written
  std::vector<Row> rows;            // blank lines skipped

  // Column index by name (case-insensitive), or -1.
  int column(const std::string& name) const;
  // Column index, or InputError naming the file, the missing column, the
  // columns found and the closest one.
  int require_column(const std::string& name) const;
  // "file line N, column 'name'" for messages.
  std::string where(const Row& row, int column) const;
  // Parses a finite number >= 0 (what = e.g. "adults per hectare").
  double non_negative(const Row& row, int column, const std::string& what) const;
  // Parses a finite number in [lo, hi].
  double number_in(const Row& row, int column, double lo, double hi, const std::string& what) const;
};

// Reads the whole file; InputError when it cannot be read, has no header, a
// quote is not closed, or a row has a different number of fields.
Table read(const std::filesystem::path& path);
// The same from text already in memory; `file` names it in messages.
Table parse(std::string text, const std::string& file);

}  // namespace cullcast::reefs::csv
