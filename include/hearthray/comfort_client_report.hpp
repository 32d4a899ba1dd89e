// The client report of comfort runs (client_report.hpp), for `comfort -o`, `compare -o` and
// whoever builds a report from comfort results: the room and its heaters, the comfort at the
// named points and over the occupied zone with verdicts and their sources, the maps, the
// assumptions, and cautions naming hot surfaces, burns, fire and the other hazards of heating,
// deferring to local codes, the maker's instructions and licensed practice.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "hearthray/client_report.hpp"
#include "hearthray/comfort.hpp"
#include "hearthray/comfort_input.hpp"
#include "hearthray/comfort_report.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/thermal_model.hpp"

namespace hearthray {

// What one comfort run gives the report. `scene` and `comfort` must outlive the calls.
struct ComfortReportInput {
  std::string name;        // short name of the scene (e.g. the file's stem), used in headings
  std::string scene_path;  // the scene file, as given
  const Scene* scene = nullptr;
  const ComfortInput* comfort = nullptr;
  std::uint64_t seed = 0;
  std::vector<SurfaceHeat> surfaces;
  HeaterSummary heaters;
  std::vector<PointComfort> points;
  std::vector<Caution> cautions;
  std::vector<ReportFigure> maps;  // floor-plan maps already written (may be empty)
};

// The room: its size, the heaters, and a table of every surface (area, emissivity, mean
// temperature and range, heat put in).
ReportSection comfort_room_section(const ComfortReportInput& run);
// Comfort: a table of the named points, one verdict per named point (radiant asymmetry within
// the ISO 7730 / ASHRAE 55 limits), one for the occupied-zone grid, one for hot surfaces
// within reach; the summary over the grid; the maps.
ReportSection comfort_points_section(const ComfortReportInput& run);
// What the figures rest on (steady state, gray diffuse surfaces, the air, the rays, the
// standards' values and that they were recalled).
std::vector<std::string> comfort_report_assumptions(const ComfortReportInput& run);
// The runs' cautions (those about one scene named with it when there are several; general
// ones once) and the hazards of heating: hot surfaces and burns, fire, combustion gases.
std::vector<std::string> comfort_report_cautions(
    const std::vector<const ComfortReportInput*>& runs);

// The whole report of one run (`comfort -o`).
ClientReport comfort_client_report(const ComfortReportInput& run);
// The report of a comparison (`compare -o`): the side-by-side table first, then each scene's
// room and comfort sections.
ClientReport compare_client_report(const std::vector<ComfortReportInput>& runs,
                                   const ReportTable& side_by_side);

}  // namespace hearthray
