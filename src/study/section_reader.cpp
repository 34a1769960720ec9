#include "section_reader.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "cullcast/base/error.hpp"
#include "cullcast/base/suggest.hpp"

namespace cullcast::study {

std::string location_text(const std::string& file, const toml::source_region& region) {
  if (region.begin.line == 0) return file + " (--set)";
  return file + ":" + std::to_string(region.begin.line) + ":" + std::to_string(region.begin.column);
}

std::string describe_node(const toml::node& node) {
  std::ostringstream out;
  switch (node.type()) {
    case toml::node_type::string: out << "string \"" << node.as_string()->get() << "\""; break;
    case toml::node_type::integer: out << "integer " << node.as_integer()->get(); break;
    case toml::node_type::floating_point: out << "number " << node.as_floating_point()->get(); break;
    case toml::node_type::boolean: out << "boolean " << (node.as_boolean()->get() ? "true" : "false"); break;
    case toml::node_type::array: out << "an array"; break;
    case toml::node_type::table: out << "a table"; break;
    default: out << "a date/time value (write it as a quoted ISO 8601 string)"; break;
  }
  return out.str();
}

SectionReader::SectionReader(const toml::table* table, std::string section, std::string file,
                             toml::source_region where)
    : table_(table), section_(std::move(section)), file_(std::move(file)), where_(where) {}

bool SectionReader::has(const std::string& key) const {
  return table_ != nullptr && table_->contains(key);
}

const toml::node* SectionReader::node(const std::string& key) {
  known_.push_back(key);
  if (table_ == nullptr) return nullptr;
  return table_->get(key);
}

std::string SectionReader::location(const std::string& key) const {
  if (table_ != nullptr) {
    if (const toml::node* n = table_->get(key)) return location_text(file_, n->source());
  }
  return location_text(file_, where_);
}

void SectionReader::fail(const std::string& key, const std::string& message) const {
  throw InputError(location(key) + ": [" + section_ + "] " + key + ": " + message);
}

void SectionReader::wrong_type(const std::string& key, const char* expected) const {
  fail(key, std::string("expected ") + expected + ", found " + describe_node(*table_->get(key)));
}

std::string SectionReader::text(const std::string& key, const std::string& fallback) {
  const toml::node* n = node(key);
  if (n == nullptr) return fallback;
  if (!n->is_string()) wrong_type(key, "a string");
  return n->as_string()->get();
}

std::string SectionReader::required_text(const std::string& key) {
  const toml::node* n = node(key);
  if (n == nullptr) {
    throw InputError(location_text(file_, where_) + ": [" + section_ + "] missing required key '" +
                     key + "' (a string)");
  }
  if (!n->is_string()) wrong_type(key, "a string");
  return n->as_string()->get();
}

std::vector<std::string> SectionReader::text_list(const std::string& key, bool required) {
  const toml::node* n = node(key);
  if (n == nullptr) {
    if (required) {
      throw InputError(location_text(file_, where_) + ": [" + section_ +
                       "] missing required key '" + key + "' (a list of strings)");
    }
    return {};
  }
  std::vector<std::string> out;
  if (n->is_string()) {
    out.push_back(n->as_string()->get());
    return out;
  }
  if (!n->is_array()) wrong_type(key, "a string or a list of strings");
  for (const toml::node& item : *n->as_array()) {
    if (!item.is_string()) {
      fail(key, "expected a list of strings, found an item that is " + describe_node(item));
    }
    out.push_back(item.as_string()->get());
  }
  if (required && out.empty()) fail(key, "expected at least one entry, found an empty list");
  return out;
}

double SectionReader::number(const std::string& key, double fallback) {
  const toml::node* n = node(key);
  if (n == nullptr) return fallback;
  if (n->is_floating_point()) return n->as_floating_point()->get();
  if (n->is_integer()) return static_cast<double>(n->as_integer()->get());
  wrong_type(key, "a number");
}

std::int64_t SectionReader::integer(const std::string& key, std::int64_t fallback) {
  const toml::node* n = node(key);
  if (n == nullptr) return fallback;
  if (n->is_integer()) return n->as_integer()->get();
  if (n->is_floating_point()) {
    const double v = n->as_floating_point()->get();
    if (std::isfinite(v) && v == std::floor(v) && std::fabs(v) < 9e15) {
      return static_cast<std::int64_t>(v);
    }
  }
  wrong_type(key, "a whole number");
}

double SectionReader::number_in(const std::string& key, double fallback, double low, double high,
                                const char* unit) {
  const double v = number(key, fallback);
  require_range(key, v, low, high, unit);
  return v;
}

int SectionReader::int_in(const std::string& key, int fallback, double low, double high,
                          const char* unit) {
  const std::int64_t v = integer(key, fallback);
  require_range(key, static_cast<double>(v), low, high, unit);
  return static_cast<int>(v);
}

bool SectionReader::boolean(const std::string& key, bool fallback) {
  const toml::node* n = node(key);
  if (n == nullptr) return fallback;
  if (!n->is_boolean()) wrong_type(key, "true or false");
  return n->as_boolean()->get();
}

void SectionReader::require_positive(const std::string& key, double value, const char* unit) {
  if (!(value > 0) || !std::isfinite(value)) {
    std::ostringstream m;
    m << "must be a positive finite number (" << unit << "), found " << value;
    fail(key, m.str());
  }
}

void SectionReader::require_at_least(const std::string& key, double value, double minimum,
                                     const char* unit) {
  if (!(value >= minimum) || std::isnan(value)) {
    std::ostringstream m;
    m << "must be at least " << minimum << " (" << unit << "), found " << value;
    fail(key, m.str());
  }
}

void SectionReader::require_range(const std::string& key, double value, double low, double high,
                                  const char* unit) {
  if (!(value >= low && value <= high)) {
    std::ostringstream m;
    m << "must be between " << low << " and " << high << " (" << unit << "), found " << value;
    fail(key, m.str());
  }
}

void SectionReader::require_one_of(const std::string& key, const std::string& value,
                                   const std::vector<std::string>& allowed) {
  if (std::find(allowed.begin(), allowed.end(), value) != allowed.end()) return;
  std::string list;
  for (const auto& a : allowed) list += (list.empty() ? "" : ", ") + ("\"" + a + "\"");
  std::string hint = closest_match(value, allowed);
  fail(key, "expected one of " + list + ", found \"" + value + "\"" +
                (hint.empty() ? "" : " (did you mean \"" + hint + "\"?)"));
}

void SectionReader::finish() const {
  if (table_ == nullptr) return;
  for (auto&& [key, value] : *table_) {
    const std::string name(key.str());
    if (std::find(known_.begin(), known_.end(), name) != known_.end()) continue;
    const std::string hint = closest_match(name, known_);
    std::string list;
    for (const auto& k : known_) list += (list.empty() ? "" : ", ") + k;
    throw InputError(location_text(file_, key.source()) + ": [" + section_ + "] unknown key '" +
                     name + "'" + (hint.empty() ? "" : " (did you mean '" + hint + "'?)") +
                     "; known keys: " + list);
  }
}

}  // namespace cullcast::study
