// Private: the [firing] table reader, called by the scene-file reader.
#pragma once

#include <toml++/toml.h>

#include <string>

#include "hearthray/firing.hpp"

namespace hearthray {

// Reads the [firing] table `node` of the scene file `path`. Throws InputError naming the file,
// line and key on any problem.
FiringInput read_firing_table(const toml::node& node, const std::string& path);

}  // namespace hearthray
