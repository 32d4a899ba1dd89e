// Private: the [gas] table reader, called by the scene-file reader (src/input/scene_file.cpp).
#pragma once

#include <toml++/toml.h>

#include <string>

#include "hearthray/gas_input.hpp"

namespace hearthray {

// Reads the [gas] table `node` of the scene file `path`. Throws InputError naming the file,
// line and key on any problem.
GasInput read_gas_table(const toml::node& node, const std::string& path);

}  // namespace hearthray
