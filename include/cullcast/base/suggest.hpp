#pragma once
// "Did you mean ...?" for misspelt keys and names.
#include <string>
#include <string_view>
#include <vector>

namespace cullcast {

// Levenshtein edit distance (insertions, deletions, substitutions).
std::size_t edit_distance(std::string_view a, std::string_view b);

// The closest candidate within a distance that scales with the word's length,
// or an empty string when nothing is close enough.
std::string closest_match(std::string_view word, const std::vector<std::string>& candidates);

}  // namespace cullcast
