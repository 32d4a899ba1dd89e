// A warning as a value: what kind of problem, and a sentence for the user. Callers decide by
// the kind (never by the words); the text is only shown.
#pragma once

#include <string>

namespace hearthray {

enum class WarningKind {
  mesh,            // from loading the mesh (dropped degenerate triangles, loader remarks)
  back_faces,      // rays arriving on the back of a one-sided surface (flipped normals?)
  touching_faces,  // faces of two surfaces lying on each other (touching solids, duplicates)
  leak,            // rays escaping a closed mesh
  normals_out,     // a surface of a closed mesh sending most of its rays out
  cache,           // the view-factor cache could not be used (the run is still right)
  comfort_point,   // a comfort point whose rays leave the room (is it inside?)
};

struct Warning {
  WarningKind kind = WarningKind::mesh;
  std::string text;
};

}  // namespace hearthray
