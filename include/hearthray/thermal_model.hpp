// Thermal model: a scene's exchange problem. One node per piece of a surface (a whole surface
// is one piece; a surface cut into patches has one piece per patch), carrying its temperature
// and condition; one face per view-factor patch (a two-sided surface is a thin sheet: the front
// and back faces of a piece sit on one node). Emissivity, condition and the surroundings
// temperature come in a ThermalInput (conditions.hpp; from a scene file: thermal_input). A
// surface's condition applies to each of its pieces: a temperature or heat flux as given, adiabatic
// as given, and a power spread as a uniform flux, each piece taking power x (piece area / surface
// area). After the solve, the per-surface summary (sums over pieces; temperatures area-weighted,
// with their range) and the energy balance that every report shows.
//
// Leaks. Rays that escape a closed mesh went through a crack between triangles, not through an
// opening. When they are fewer than ThermalModelOptions::leak_limit of all rays, their share
// of each face's radiation is given back to the face itself (added to its self-view F_ii):
// the exchange areas stay symmetric and every row still sums to one, so the enclosure still
// balances to round-off, and the result moves by at most that share (~1e-6). The alternative,
// a surroundings at some temperature, would make a closed furnace lose heat through a crack
// that is not there, and refuse to solve when no [surroundings] is given. More escaped rays in
// a closed mesh are no crack: the model keeps them as radiation to the surroundings and, when
// no surroundings temperature is given, refuses with advice on the mesh.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "hearthray/conditions.hpp"
#include "hearthray/exchange.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray {

struct ThermalModelOptions {
  // Largest share of all rays, escaped or lost on back faces in a closed mesh, that is taken
  // for leaks through shared edges and folded back (see above). 0 turns folding off.
  double leak_limit = 1e-6;

  bool IsValid(std::string* error) const;
};

struct ThermalModel {
  ViewFactors factors;                            // as the exchange uses them (leaks folded back)
  std::vector<ExchangeNode> nodes;                // one per surface piece, in patch order
  std::vector<std::uint32_t> node_surface;        // per node: its surface
  std::vector<ExchangeFace> faces;                // one per patch, in patch order
  std::vector<Side> face_side;                    // per face: front or back of its surface
  std::vector<Vec3> face_centres;                 // per face: its patch's centroid, m
  std::vector<std::string> surface_names;         // per surface
  std::vector<NodeCondition> surface_conditions;  // per surface, as given (power not split)
  std::vector<bool> two_sided;                    // per surface
  std::vector<double> emissivity;                 // per surface
  std::optional<double> surroundings_K;
  bool mesh_closed = false;        // the one-sided surfaces close an enclosure (which may
                                   // hold two-sided sheets)
  double lost_fraction = 0;        // of all rays: escaped or absorbed on back faces
  bool leaks_folded = false;       // lost rays were folded back as leaks
  std::vector<std::string> notes;  // plain sentences about choices made, for the user

  // The problem for solve_exchange. It points into `factors`: keep the model alive (and in
  // place) while the problem is used.
  ExchangeProblem problem() const;
};

// Throws InputError when radiation leaves the scene (escapes, or lands on back faces of
// one-sided surfaces) and no surroundings temperature is given: the message names the
// surfaces and how much of their radiation leaves. `input` has one entry per surface of
// `scene`, the factors one row per patch (std::invalid_argument otherwise).
// The factors are taken by value: move them in to avoid a copy of a large matrix.
ThermalModel build_thermal_model(const ThermalInput& input, const Scene& scene,
                                 const PatchSet& patches, ViewFactors factors,
                                 const ThermalModelOptions& options = {});

// One surface after the solve: powers are summed over its faces; W/m^2 values are averaged
// over its faces, weighted by area (for a one-sided surface: its face's values).
struct SurfaceHeat {
  std::string name;
  bool two_sided = false;
  double area_m2 = 0;  // all faces
  double emissivity = 0;
  double temperature_K = 0;      // area-weighted mean over the surface's pieces
  double temperature_min_K = 0;  // range over the pieces (equal to the mean for one piece)
  double temperature_max_K = 0;
  std::size_t pieces = 1;
  double radiosity_W_m2 = 0;
  double irradiation_W_m2 = 0;
  double net_flux_W_m2 = 0;        // net_W / area_m2
  double net_W = 0;                // net heat leaving by radiation (positive out)
  double convection_W = 0;         // to the fluid (positive out)
  double wall_loss_W = 0;          // through the wall (positive out)
  double heat_input_W = 0;         // = net_W + convection_W + wall_loss_W
  std::vector<std::size_t> faces;  // indices into ExchangeResult::faces
  std::vector<std::size_t> nodes;  // indices into ExchangeResult::nodes
};

std::vector<SurfaceHeat> surface_heat(const ThermalModel& model, const ExchangeResult& result);

// Where the heat put in goes, each flow on its own line rather than netted:
//   gross_input = taken_out + convection + wall_loss + to_surroundings + residual,
// where gross_input sums the pieces that take heat in (heaters, held hot surfaces) and
// taken_out the pieces that give heat up (loads, cooled or held cold surfaces), each as a
// positive number; heat_input = gross_input - taken_out is the net of the two.
struct HeatBalance {
  double gross_input_W = 0;      // heat put in where it is put in (pieces with heat input > 0)
  double taken_out_W = 0;        // heat taken by loads and sinks (pieces with heat input < 0), >= 0
  double heat_input_W = 0;       // net: gross_input_W - taken_out_W
  double convection_W = 0;       // to the fluids, net over all surfaces (positive out)
  double wall_loss_W = 0;        // through the walls, net over all surfaces (positive out)
  double to_surroundings_W = 0;  // net radiation out of the openings to the surroundings
  double residual_W = 0;
  double largest_W = 0;              // largest single flow of any surface, for relative measures
  std::vector<std::string> sources;  // surfaces with a piece taking heat in, in scene order
  std::vector<std::string> sinks;    // surfaces with a piece giving heat up, in scene order
};

// The balance of a solved model (sources and sinks named by surface).
HeatBalance heat_balance(const ThermalModel& model, const ExchangeResult& result);
// The same without names.
HeatBalance heat_balance(const ExchangeResult& result);

}  // namespace hearthray
