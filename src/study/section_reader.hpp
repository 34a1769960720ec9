#pragma once
// Reads one TOML table of a scenario: typed look-ups with defaults, range
// checks, and an unknown-key check with "did you mean" suggestions. Every
// message starts with "file:line:column: [section] key:".
#include <cstdint>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include <toml++/toml.h>

namespace cullcast::study {

class SectionReader {
 public:
  SectionReader(const toml::table* table, std::string section, std::string file,
                toml::source_region where);

  std::string text(const std::string& key, const std::string& fallback);
  std::string required_text(const std::string& key);
  std::vector<std::string> text_list(const std::string& key, bool required);
  double number(const std::string& key, double fallback);
  std::int64_t integer(const std::string& key, std::int64_t fallback);
  bool boolean(const std::string& key, bool fallback);
  // number() / integer() checked with require_range(): the usual read of a
  // bounded setting.
  double number_in(const std::string& key, double fallback, double low, double high,
                   const char* unit);
  int int_in(const std::string& key, int fallback, double low, double high, const char* unit);
  bool has(const std::string& key) const;
  // Record a key read directly from the table (e.g. a TOML date-time).
  void mark_known(const std::string& key) { known_.push_back(key); }

  // Checks, naming the key and its location.
  void require_positive(const std::string& key, double value, const char* unit);
  void require_at_least(const std::string& key, double value, double minimum, const char* unit);
  void require_range(const std::string& key, double value, double low, double high,
                     const char* unit);
  void require_one_of(const std::string& key, const std::string& value,
                      const std::vector<std::string>& allowed);
  [[noreturn]] void fail(const std::string& key, const std::string& message) const;

  // Every key present must have been asked for; otherwise an error with a suggestion.
  void finish() const;

 private:
  const toml::node* node(const std::string& key);
  std::string location(const std::string& key) const;
  [[noreturn]] void wrong_type(const std::string& key, const char* expected) const;

  const toml::table* table_;
  std::string section_;
  std::string file_;
  toml::source_region where_;
  std::vector<std::string> known_;
};

std::string describe_node(const toml::node& node);
std::string location_text(const std::string& file, const toml::source_region& region);

}  // namespace cullcast::study
