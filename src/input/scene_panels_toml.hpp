// Private to the input stage: the placing keys of [panel.NAME] tables and the [panel_group]
// offsets (scene_panels.cpp). The surface keys of a panel's table are read by the scene-file
// reader as those of a [surface.NAME] table.
#pragma once

#include <toml++/toml.h>

#include <string>
#include <vector>

#include "hearthray/panels.hpp"

namespace hearthray::input {

// Keys of [panel.NAME] that place it; every other key is a surface key.
inline const std::vector<std::string> kPanelPlaceKeys = {"on", "centre", "size", "along", "group"};

// The placement of [panel.NAME] (`table`): on, centre, size, along; `group` gets the name of
// its group ("" for none). Throws InputError naming the file and line.
PanelPlacement read_panel_place(const toml::table& table, const std::string& name,
                                const std::string& path, std::string* group);

// [panel_group.NAME] offset = ["0 m", "-1.2 m", "0 m"]: moves every panel whose group is NAME
// (`groups[k]` is panel k's). A group table no panel names, or a panel naming a group with no
// table, is an error.
void move_panel_groups(const toml::node* group_tables, const std::vector<std::string>& groups,
                       std::vector<PanelPlacement>* panels, const std::string& path);

}  // namespace hearthray::input
