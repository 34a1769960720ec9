#pragma once
// "--set section.key=value": put a value into the parsed scenario before it is
// read, so overrides go through exactly the same checks as the file.
// "spawning.key=v" sets the key in every [[spawning]] block,
// "spawning.2.key=v" in the second one (counting from 1).
#include <string>

#include <toml++/toml.h>

namespace cullcast::study {

void apply_override(toml::table& root, const std::string& item);

}  // namespace cullcast::study
