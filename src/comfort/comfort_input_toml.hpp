// Private: the [comfort] table reader, called by the scene-file reader (src/input/scene_file.cpp).
#pragma once

#include <toml++/toml.h>

#include <string>

#include "hearthray/comfort_input.hpp"

namespace hearthray {

// Reads the [comfort] table `node` of the scene file `path`. Throws InputError naming the file,
// line and key on any problem.
ComfortInput read_comfort_table(const toml::node& node, const std::string& path);

}  // namespace hearthray
