#include "hearthray/diagnostics.hpp"

#include "core/text.hpp"
#include "hearthray/mesh_where.hpp"

namespace hearthray {

namespace {

// Share of all rays lost (on back faces, or escaping a closed mesh) above which faces lying on
// each other are looked for.
constexpr double kContactSearchShare = 1e-5;

// Rays on back faces (or escaping a closed mesh) often come from solids exported touching:
// names those contacts as warnings and marks the surfaces involved, so that their normals are
// not blamed. Returns whether any contact was found.
bool name_contacts(const Scene& scene, const Tallies& tallies, RayDiagnostics* d) {
  // The search costs seconds at 10^5 triangles: run it only for losses well above the ~1e-6
  // of rays that slip through shared edges of a sound mesh.
  const double lost = double(d->back_face_hits) + (d->mesh_closed ? double(d->escaped) : 0.0);
  if (!(lost > kContactSearchShare * double(d->emitted))) return false;
  bool found = false;
  for (const FaceContact& c : face_contacts(scene)) {
    found = true;
    d->warnings.push_back({WarningKind::touching_faces, contact_sentence(scene, c)});
    for (std::uint32_t s : {c.surface_a, c.surface_b})
      if (tallies.back_face_hits_on_surface[s] > 0) d->surfaces[s].touching = true;
  }
  return found;
}

}  // namespace

RayDiagnostics diagnose_rays(const Scene& scene, const PatchSet& patches, const Tallies& tallies,
                             const MeshTopology& topology) {
  RayDiagnostics d;
  d.mesh_closed = topology.closed || topology.one_sided_closed;
  d.surfaces.resize(scene.surfaces.size());
  for (std::size_t s = 0; s < scene.surfaces.size(); ++s) {
    d.surfaces[s].name = scene.surfaces[s].name;
    d.surfaces[s].arrivals = tallies.hits_on_surface[s];
    d.surfaces[s].back_face_hits = tallies.back_face_hits_on_surface[s];
    d.back_face_hits += tallies.back_face_hits_on_surface[s];
  }
  for (std::size_t r = 0; r < tallies.rows(); ++r) {
    const Patch& p = patches.patches[tallies.emitter_begin + r];
    d.surfaces[p.surface].emitted += tallies.rays[r];
    d.surfaces[p.surface].escaped += tallies.escaped[r];
    d.emitted += tallies.rays[r];
    d.escaped += tallies.escaped[r];
  }

  const bool contacts = name_contacts(scene, tallies, &d);
  for (const SurfaceRayReport& s : d.surfaces) {
    if (s.back_face_hits == 0 || s.touching) continue;
    const double share = double(s.back_face_hits) / double(s.arrivals);
    if (share >= 0.1)
      d.warnings.push_back({WarningKind::back_faces,
                            "surface '" + s.name + "': " + percent(share) +
                                " of the rays reaching it arrive on its back side: its normals "
                                "probably point the wrong way (the front is the side from which "
                                "the corners run counter-clockwise). Flip its faces, or declare "
                                "it two_sided if it is a thin sheet seen from both sides "
                                "(hearthray check shows where the rays land)." +
                                (share > 0.5 ? " A solve refuses it until then, unless its table "
                                               "says expect_back_hits = true."
                                             : "")});
    else
      d.warnings.push_back({WarningKind::back_faces,
                            "surface '" + s.name + "': " + std::to_string(s.back_face_hits) +
                                " rays (" + percent(share) +
                                " of its arrivals) hit its back side and were absorbed there; " +
                                (contacts ? "probably rays from faces inside a solid (named "
                                            "above); otherwise "
                                          : "") +
                                "declare it two_sided if both sides should take part."});
  }
  if (d.escaped > 0) {
    const double share = double(d.escaped) / double(d.emitted);
    if (d.mesh_closed) {
      d.warnings.push_back(
          {WarningKind::leak,
           "leak: the mesh is closed, yet " + std::to_string(d.escaped) + " rays (" +
               percent(share) +
               ") escaped through it; they are counted as radiation to the "
               "surroundings. Check for " +
               (contacts ? "the faces lying on each other named above, " : "") +
               "gaps, or a surface whose normals point out of the enclosure (hearthray "
               "check shows where)."});
    } else {
      std::size_t worst = 0;
      for (std::size_t s = 1; s < d.surfaces.size(); ++s) {
        const auto& a = d.surfaces[s];
        const auto& b = d.surfaces[worst];
        if (a.emitted && double(a.escaped) / a.emitted >
                             double(b.escaped) / std::max<std::uint64_t>(b.emitted, 1))
          worst = s;
      }
      const auto& w = d.surfaces[worst];
      d.notes.push_back("open enclosure: " + percent(share) +
                        " of all rays leave to the surroundings (most from '" + w.name + "', " +
                        percent(double(w.escaped) / std::max<std::uint64_t>(w.emitted, 1)) + ").");
    }
  }
  for (const SurfaceRayReport& s : d.surfaces) {
    if (s.emitted > 0 && d.mesh_closed && s.escaped * 2 > s.emitted)
      d.warnings.push_back({WarningKind::normals_out,
                            "surface '" + s.name + "': most of its rays leave a closed mesh: " +
                                "its normals probably point out of the enclosure."});
  }
  return d;
}

}  // namespace hearthray
