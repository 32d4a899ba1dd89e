// Private to the tool: what `hearthray size` prints and writes for each sized layout (the
// terminal lines, the cautions, the maps and the client's HTML report).
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "hearthray/comfort_report.hpp"
#include "hearthray/heating_plan.hpp"

namespace hearthray::cli {

struct SizedLayout {
  SolvedScene scene;  // left at the plan's power
  HeatingPlan plan;
  std::vector<Caution> cautions;
};

inline constexpr const char* kSizeMethod =
    "method: view factors and the comfort points' angle factors traced once; the total power "
    "found by the secant method with the heaters' shares fixed (the scene's, then, with "
    "--split least, those of linear programs on the response to each heater's power), each "
    "step one solve of the radiosity exchange (with the room air's balance where the scene "
    "has [room_air]) and of the comfort figures, no ray traced again";

// "air 19.6 C (solved: ventilation 231 W, gains 150 W); panels up to 61.2 C; t_o 20.4 to 21.6 C"
std::string state_line(const SizedLayout& layout);

// The layouts' indices from the least power needed to the most; layouts that do not reach the
// target come last (stable: equal powers keep the order given).
std::vector<std::size_t> rank_by_power(const std::vector<SizedLayout>& layouts);

// The cautions for the layouts: each layout's own (hot surfaces within reach, glass near
// heat), named, then the general ones once, and the electrical panels' caution.
std::vector<std::string> size_cautions(const std::vector<SizedLayout>& layouts,
                                       const std::vector<std::string>& names);

// In `dir`: each layout's maps (NAME_map_operative.png, ...) on one colour range per quantity,
// sizing.csv (one row per layout) and report.html for the client. Returns the files' names.
std::vector<std::string> write_size_outputs(const std::filesystem::path& dir,
                                            const HeatingTarget& target,
                                            const std::vector<SizedLayout>& layouts,
                                            const std::vector<std::string>& names);

}  // namespace hearthray::cli
