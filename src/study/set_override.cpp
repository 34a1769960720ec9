#include "set_override.hpp"

#include <stdexcept>
#include <vector>

#include "cullcast/base/error.hpp"

namespace cullcast::study {
namespace {

std::vector<std::string> split_path(const std::string& path) {
  std::vector<std::string> parts;
  std::string current;
  for (char c : path) {
    if (c == '.') {
      parts.push_back(current);
      current.clear();
    } else {
      current += c;
    }
  }
  parts.push_back(current);
  return parts;
}

// A TOML value if the text is one ("3", "2.5", "true", "[\"a\"]", "\"x\""),
// otherwise the text itself as a string, so `--set outputs.dir=runs/a` works.
toml::table value_holder(const std::string& text) {
  try {
    toml::table t = toml::parse("value = " + text);
    return t;
  } catch (const toml::parse_error&) {
    toml::table t;
    t.insert("value", text);
    return t;
  }
}

void put(toml::table& table, const std::string& key, const toml::table& holder) {
  const toml::node* value = holder.get("value");
  table.insert_or_assign(key, *value);
}

}  // namespace

void apply_override(toml::table& root, const std::string& item) {
  const auto equals = item.find('=');
  if (equals == std::string::npos || equals == 0) {
    throw InputError("--set \"" + item + "\": expected section.key=value");
  }
  const std::string path = item.substr(0, equals);
  const std::string text = item.substr(equals + 1);
  const std::vector<std::string> parts = split_path(path);
  for (const auto& p : parts) {
    if (p.empty()) throw InputError("--set \"" + item + "\": empty name in '" + path + "'");
  }
  const toml::table holder = value_holder(text);

  toml::node* section = root.get(parts[0]);
  if (section != nullptr && section->is_array()) {
    toml::array& blocks = *section->as_array();
    if (parts.size() == 3) {
      std::size_t index = 0;
      try {
        // Digits only: stoul alone would take "2x" as 2 and "-1" as a huge number.
        if (parts[1].find_first_not_of("0123456789") != std::string::npos) throw std::invalid_argument("");
        index = std::stoul(parts[1]);
      } catch (const std::exception&) {
        throw InputError("--set \"" + item + "\": '" + parts[1] +
                         "' is not a block number (counting from 1)");
      }
      if (index < 1 || index > blocks.size() || !blocks.get(index - 1)->is_table()) {
        throw InputError("--set \"" + item + "\": there is no [[" + parts[0] + "]] block " +
                         parts[1] + " (the scenario has " + std::to_string(blocks.size()) + ")");
      }
      put(*blocks.get(index - 1)->as_table(), parts[2], holder);
      return;
    }
    if (parts.size() != 2) {
      throw InputError("--set \"" + item + "\": expected " + parts[0] + ".key=value or " +
                       parts[0] + ".N.key=value");
    }
    for (auto& block : blocks) {
      if (block.is_table()) put(*block.as_table(), parts[1], holder);
    }
    return;
  }
  if (parts.size() != 2) {
    throw InputError("--set \"" + item + "\": expected section.key=value");
  }
  if (section == nullptr) {
    root.insert(parts[0], toml::table{});
    section = root.get(parts[0]);
  }
  if (!section->is_table()) {
    throw InputError("--set \"" + item + "\": '" + parts[0] + "' is not a section");
  }
  put(*section->as_table(), parts[1], holder);
}

}  // namespace cullcast::study
