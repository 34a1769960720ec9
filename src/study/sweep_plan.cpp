#include "cullcast/study/sweep_plan.hpp"

#include <algorithm>
#include <fstream>
#include <set>
#include <sstream>

#include "cullcast/base/error.hpp"
#include "cullcast/study/load_study.hpp"
#include "section_reader.hpp"
#include "set_override.hpp"

namespace cullcast::study {
namespace fs = std::filesystem;
namespace {

std::string trim(const std::string& s) {
  const auto first = s.find_first_not_of(" \t");
  if (first == std::string::npos) return "";
  const auto last = s.find_last_not_of(" \t");
  return s.substr(first, last - first + 1);
}

bool valid_name(const std::string& name) {
  if (name.empty() || name == "." || name == "..") return false;
  return std::all_of(name.begin(), name.end(), [](char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '.' ||
           c == '_' || c == '-';
  });
}

// A grid value as a folder-name fragment: "0.5" stays, "\"a b\"" -> "a_b".
std::string name_fragment(const std::string& text) {
  std::string out;
  for (char c : text) {
    if (c == '"' || c == '\'') continue;
    const bool ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                    c == '.' || c == '-';
    out += ok ? c : '_';
  }
  return out;
}

struct Axis {
  std::string key;                  // section.key
  std::vector<std::string> values;  // TOML value texts
  std::string where;
};

std::string value_text(const toml::node& n) {
  std::ostringstream s;
  n.visit([&s](const auto& v) { s << v; });
  return s.str();
}

std::string read_text(const fs::path& scenario) {
  std::ifstream in(scenario, std::ios::binary);
  if (!in) {
    throw InputError("cannot open scenario file " + scenario.string() +
                     ": no such file or not readable");
  }
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

std::string strip_set_prefix(const std::string& message, const std::string& file) {
  const std::string prefix = file + " (--set): ";
  if (message.rfind(prefix, 0) == 0) return message.substr(prefix.size());
  return message;
}

}  // namespace

std::string normalise_override(const std::string& item) {
  const auto equals = item.find('=');
  if (equals == std::string::npos) {
    throw InputError("override \"" + item + "\": expected section.key = value");
  }
  const std::string key = trim(item.substr(0, equals));
  const std::string value = trim(item.substr(equals + 1));
  if (key.empty()) throw InputError("override \"" + item + "\": expected section.key = value");
  return key + "=" + value;
}

std::vector<std::string> drift_key(const SweepVariant& variant) {
  std::vector<std::string> key;
  for (const auto& o : variant.overrides) {
    const std::string section = o.substr(0, o.find('.'));
    if (section == "connectivity" || section == "cull") continue;
    key.push_back(o);
  }
  std::sort(key.begin(), key.end());
  return key;
}

Study load_variant(const fs::path& scenario, const std::vector<std::string>& cli_overrides,
                   const SweepPlan& plan, const SweepVariant& variant) {
  LoadOptions options;
  options.overrides = cli_overrides;
  const std::string file = scenario.string();
  auto attempt = [&](std::size_t count) {
    LoadOptions o = options;
    for (std::size_t i = 0; i < count; ++i) o.overrides.push_back(variant.overrides[i]);
    o.overrides.push_back("outputs.dir=\"" + (plan.outputs_dir / variant.name).string() + "\"");
    return load_study(scenario, o);
  };
  try {
    return attempt(variant.overrides.size());
  } catch (const InputError& whole) {
    // Name the first override that breaks the scenario (the scenario itself loads).
    for (std::size_t k = 0; k < variant.overrides.size(); ++k) {
      try {
        attempt(k + 1);
      } catch (const InputError& e) {
        const std::string& where =
            k < variant.locations.size() ? variant.locations[k] : variant.where;
        throw InputError(where + ": variant \"" + variant.name + "\", override \"" +
                         variant.overrides[k] + "\": " + strip_set_prefix(e.what(), file));
      }
    }
    throw InputError(variant.where + ": variant \"" + variant.name +
                     "\": " + strip_set_prefix(whole.what(), file));
  }
}

SweepPlan read_sweep_plan(const fs::path& scenario, const std::vector<std::string>& cli_overrides,
                          const std::vector<std::string>& vary) {
  const std::string file = scenario.string();
  LoadOptions base_options;
  base_options.overrides = cli_overrides;
  const Study base = load_study(scenario, base_options);  // the scenario itself must load

  toml::table root;
  try {
    root = toml::parse(read_text(scenario), file);
  } catch (const toml::parse_error& e) {
    throw InputError(location_text(file, e.source()) +
                     ": not valid TOML: " + std::string(e.description()));
  }

  for (const auto& item : cli_overrides)
    apply_override(root, item);  // --set sweep.baseline=false too
  SweepPlan plan;
  plan.outputs_dir = base.outputs.dir;
  bool baseline = true;
  std::vector<Axis> axes;
  const toml::node* sweep_node = root.get("sweep");
  if (sweep_node != nullptr && !sweep_node->is_table()) {
    throw InputError(location_text(file, sweep_node->source()) +
                     ": [sweep] expected a table, found " + describe_node(*sweep_node));
  }
  const toml::table* sweep = sweep_node ? sweep_node->as_table() : nullptr;
  SectionReader r(sweep, "sweep", file, root.source());
  baseline = r.boolean("baseline", true);
  r.mark_known("vary");
  if (r.has("vary")) {
    const toml::node* v = sweep->get("vary");
    if (!v->is_table())
      r.fail("vary", "expected a table of \"section.key\" = [values], found " + describe_node(*v));
    for (auto&& [key, values] : *v->as_table()) {
      Axis axis;
      axis.key = std::string(key.str());
      axis.where = location_text(file, key.source());
      if (!values.is_array() || values.as_array()->empty()) {
        throw InputError(axis.where + ": [sweep] vary \"" + axis.key +
                         "\": expected a non-empty array of values, found " +
                         describe_node(values));
      }
      for (const auto& x : *values.as_array()) axis.values.push_back(value_text(x));
      axes.push_back(axis);
    }
  }
  r.finish();
  for (const auto& item : vary) {
    const std::string norm = normalise_override(item);
    Axis axis;
    axis.key = norm.substr(0, norm.find('='));
    axis.where = "--vary \"" + item + "\"";
    std::string rest = norm.substr(norm.find('=') + 1), current;
    std::istringstream parts(rest);
    while (std::getline(parts, current, ',')) {
      current = trim(current);
      if (current.empty())
        throw InputError(axis.where + ": empty value (expected section.key=v1,v2,...)");
      axis.values.push_back(current);
    }
    if (axis.values.empty()) throw InputError(axis.where + ": expected section.key=v1,v2,...");
    axes.push_back(axis);
  }
  if (axes.size() > 2) {
    throw InputError(axes[2].where + ": a grid varies at most two settings (found " +
                     std::to_string(axes.size()) +
                     "); list other combinations as [[variant]] blocks");
  }

  if (baseline) plan.variants.push_back({"baseline", {}, file, {}});
  if (const toml::node* blocks = root.get("variant")) {
    if (!blocks->is_array_of_tables()) {
      throw InputError(location_text(file, blocks->source()) +
                       ": [[variant]] expected blocks written [[variant]], found " +
                       describe_node(*blocks));
    }
    for (const auto& block : *blocks->as_array()) {
      const toml::table& t = *block.as_table();
      SectionReader v(&t, "variant", file, t.source());
      SweepVariant variant;
      variant.where = location_text(file, t.source());
      variant.name = v.required_text("name");
      if (!valid_name(variant.name)) {
        v.fail("name", "\"" + variant.name +
                           "\" cannot be a folder name; use letters, digits, '.', '_' and '-'");
      }
      for (const auto& item : v.text_list("set", true))
        variant.overrides.push_back(normalise_override(item));
      for (const auto& item : *t.get("set")->as_array()) {
        variant.locations.push_back(location_text(file, item.source()));
      }
      v.finish();
      plan.variants.push_back(variant);
    }
  }
  if (!axes.empty()) {
    std::vector<std::vector<std::pair<std::string, std::string>>> combos = {{}};
    for (const auto& axis : axes) {
      std::vector<std::vector<std::pair<std::string, std::string>>> next;
      for (const auto& c : combos) {
        for (const auto& value : axis.values) {
          auto d = c;
          d.emplace_back(axis.key, value);
          next.push_back(d);
        }
      }
      combos = next;
    }
    for (const auto& c : combos) {
      SweepVariant variant;
      variant.where = axes.front().where;
      for (const auto& [key, value] : c) {
        variant.overrides.push_back(key + "=" + value);
        const std::string short_key = key.substr(key.rfind('.') + 1);
        variant.name += (variant.name.empty() ? "" : "__") + short_key + "-" + name_fragment(value);
      }
      plan.variants.push_back(variant);
    }
  }
  if (plan.variants.empty()) {
    throw InputError(file +
                     ": nothing to sweep: add [[variant]] blocks (name, set) or [sweep] vary, "
                     "or give --vary section.key=v1,v2");
  }
  std::set<std::string> names;
  for (const auto& v : plan.variants) {
    if (!names.insert(v.name).second) {
      throw InputError(v.where + ": two variants are named \"" + v.name +
                       "\" (each needs its own folder)");
    }
  }
  for (const auto& v : plan.variants) load_variant(scenario, cli_overrides, plan, v);
  return plan;
}

}  // namespace cullcast::study
