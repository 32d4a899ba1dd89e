// `hearthray check`: what the mesh holds and whether it is fit for an enclosure calculation.
#include <cstdio>
#include <iostream>

#include "commands.hpp"
#include "hearthray/mesh_where.hpp"
#include "hearthray/where_file.hpp"

namespace hearthray::cli {

namespace {

double share(std::uint64_t part, std::uint64_t whole) {
  return whole ? double(part) / double(whole) : 0.0;
}

// Most items of one kind listed; the rest counted (all are in the --where file).
constexpr std::size_t kListed = 10;
// Rays per surface side for the back-hit places: a sample, not a result.
constexpr std::uint64_t kSpotRays = 5000;

void print_gaps(const Scene& scene, const std::vector<GapRun>& gaps) {
  if (gaps.empty()) return;
  std::printf("\ngaps and open rims (boundary edges joined into runs):\n");
  for (std::size_t g = 0; g < gaps.size() && g < kListed; ++g) {
    std::printf("  gap %zu: %s\n", g + 1, gap_sentence(scene, gaps[g]).c_str());
  }
  if (gaps.size() > kListed) std::printf("  ... and %zu more\n", gaps.size() - kListed);
}

void print_contacts(const Scene& scene, const std::vector<FaceContact>& contacts) {
  if (contacts.empty()) return;
  std::printf("\nfaces lying on or cutting through each other:\n");
  for (std::size_t k = 0; k < contacts.size() && k < kListed; ++k)
    std::printf("  %zu: %s\n", k + 1, contact_sentence(scene, contacts[k]).c_str());
  if (contacts.size() > kListed) std::printf("  ... and %zu more\n", contacts.size() - kListed);
}

void print_back_hits(const Scene& scene, const std::vector<BackHitSpot>& spots) {
  if (spots.empty()) return;
  std::printf("\nwhere rays land on back faces (a sample of %llu rays per surface side):\n",
              static_cast<unsigned long long>(kSpotRays));
  for (std::size_t k = 0; k < spots.size() && k < kListed; ++k)
    std::printf("  %zu: %s\n", k + 1, back_hit_sentence(scene, spots[k]).c_str());
  if (spots.size() > kListed) std::printf("  ... and %zu more\n", spots.size() - kListed);
}

}  // namespace

int run_check_command(const CheckArgs& args) {
  const SceneFile file = open_scene_with_unit(args.input, args.unit);
  const Scene scene = load_scene(file);
  const MeshTopology topology = analyse_topology(scene);

  std::size_t dropped = 0;
  for (const Surface& s : scene.surfaces) dropped += s.dropped_degenerate;
  std::printf("mesh      %s (unit %s, surfaces from %s)\n", scene.source.c_str(),
              to_string(file.mesh.unit).c_str(),
              file.mesh.surfaces_from == SurfacesFrom::groups ? "groups" : "materials");
  std::printf("bounds    x %.6g .. %.6g m, y %.6g .. %.6g m, z %.6g .. %.6g m\n", scene.bounds.lo.x,
              scene.bounds.hi.x, scene.bounds.lo.y, scene.bounds.hi.y, scene.bounds.lo.z,
              scene.bounds.hi.z);
  std::printf("triangles %zu (degenerate dropped: %zu, duplicates: %zu)\n", scene.triangles.size(),
              dropped, topology.duplicate_triangles);
  if (topology.closed)
    std::printf("topology  closed: every edge is shared by exactly two triangles\n");
  else if (topology.one_sided_closed)
    std::printf("topology  closed enclosure (its one-sided surfaces) holding two-sided sheets\n");
  else
    std::printf(
        "topology  open: %zu boundary edges, %zu edges shared by more than two "
        "triangles\n",
        topology.boundary_edges, topology.nonmanifold_edges);

  // Quick ray estimate on whole surfaces, raw counts only.
  const FactorRun run = quick_view_factors(scene, args.rays, args.seed, args.threads, args.force);
  const RayDiagnostics& d = run.diagnostics;

  std::printf("\n%-24s %9s %12s %9s %12s %10s\n", "surface", "triangles", "area m2", "sides",
              "back hits", "escaped");
  for (std::size_t s = 0; s < scene.surfaces.size(); ++s) {
    const Surface& surface = scene.surfaces[s];
    const SurfaceRayReport& r = d.surfaces[s];
    std::printf("%-24.24s %9u %12.6g %9s %11.2f%% %9.2f%%\n", surface.name.c_str(),
                surface.triangle_count, surface.area, surface.two_sided ? "two" : "one",
                100 * share(r.back_face_hits, r.arrivals), 100 * share(r.escaped, r.emitted));
  }
  std::printf(
      "\n(back hits: share of arrivals on the back of a one-sided surface; escaped: "
      "share of the surface's own rays that hit nothing; %llu rays per side)\n",
      static_cast<unsigned long long>(args.rays));
  WhereFindings found;
  found.gaps = gap_runs(scene);
  found.contacts = face_contacts(scene);
  if (d.back_face_hits > 0) found.back_hits = back_hit_spots(scene, kSpotRays, args.seed);
  print_gaps(scene, found.gaps);
  print_contacts(scene, found.contacts);
  print_back_hits(scene, found.back_hits);
  const std::vector<std::string> defaults = defaults_taken(file, scene);
  if (!defaults.empty()) std::printf("\n");
  for (const std::string& line : defaults) std::printf("%s\n", line.c_str());
  if (!args.where.empty()) {
    write_where_file(args.where, scene, found);
    std::printf("\nwrote %s (%zu gap(s), %zu contact(s) of faces, %zu surface(s) with back hits)\n",
                args.where.c_str(), found.gaps.size(), found.contacts.size(),
                found.back_hits.size());
  }
  std::cout.flush();
  print_warnings(run.warnings);
  print_notes(run.notes);
  if (run.warnings.empty()) std::printf("no warnings\n");
  return 0;
}

}  // namespace hearthray::cli
