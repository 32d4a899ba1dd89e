// Private to the input stage: how the scene file's messages name what they found -- a key's
// nearest allowed spelling, a node's TOML type, a number as written.
#pragma once

#include <toml++/toml.h>

#include <cstddef>
#include <string>

namespace hearthray::input {

// Levenshtein distance (insertions, deletions, substitutions), for "did you mean" hints.
std::size_t edit_distance(const std::string& a, const std::string& b);
// "a string", "an integer", "a table", ...
std::string type_name(const toml::node& node);
// An integer or float node as text ("350", "0.25"); "" for other types.
std::string number_text(const toml::node& node);

}  // namespace hearthray::input
