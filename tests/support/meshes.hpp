// OBJ text for the geometries of the validation cases, with their closed forms in
// tests/support/closed_forms.hpp. Each surface is one OBJ group; the front side (CCW winding)
// of every surface faces the other surfaces of the case.
//
// Lengths are given in model units and every coordinate is multiplied by `scale` when written,
// so one geometry can be produced at another size (scale 1000 with unit m: a 1 m cube becomes
// 1 km) or in another unit (scale 1000 with MeshOptions::unit = mm: the same metres written in
// millimetres). Coordinates are written with 17 significant digits, so what is read back is
// the double that was computed.
#pragma once

#include <string>

#include "hearthray/scene.hpp"

namespace hearthray::testing {

// Two a x b rectangles, directly opposed at distance c: "lower" in z = 0 facing +z over
// [0, a] x [0, b], and "upper" in z = c facing -z. (Howell C-11.)
std::string parallel_rectangles_obj(double a, double b, double c, double scale = 1);

// Two rectangles sharing the edge [0, l] on the x axis, fronts facing into the wedge: "base"
// in z = 0 over y in [0, w], facing +z, and "wall" in y = 0 over z in [0, h], facing +y.
// (Howell C-14: factor base -> wall with (l, w, h).)
std::string perpendicular_rectangles_obj(double l, double w, double h, double scale = 1);

// Two coaxial regular polygons inscribed in circles of radii r1 and r2, `segments` sides,
// fan-triangulated from the centre: "lower" in z = 0 facing +z, "upper" in z = h facing -z.
std::string coaxial_disks_obj(double r1, double r2, double h, int segments, double scale = 1);

// The box [0, a] x [0, b] x [0, c] with inward normals, six groups: floor (z = 0), roof
// (z = c), south (y = 0), north (y = b), west (x = 0), east (x = a). Each face is an n x n grid
// of quads (n = subdivisions), two triangles each; vertices are shared between faces, so the
// mesh is closed. Every triangle is CCW seen from inside.
std::string box_obj(double a, double b, double c, int subdivisions = 1, double scale = 1);
// The unit cube of box_obj.
std::string unit_cube_obj(int subdivisions = 1, double scale = 1);

// Two concentric icospheres (an icosahedron with each triangle split into four `level` times,
// new vertices pushed onto the sphere): "inner" of radius r1 with outward normals, "outer" of
// radius r2 with inward normals. 20 * 4^level triangles each.
std::string concentric_spheres_obj(double r1, double r2, int level, double scale = 1);

// Two p x p plates centred on the z axis, "lower" in z = 0 facing +z and "upper" in z = gap
// facing -z, and between them a q x q "baffle" in z = gap / 2 (front facing +z, towards
// "upper"). With q > p the baffle hides each plate from the other completely. The test
// declares the baffle two-sided on the loaded Scene before making patches.
std::string baffled_plates_obj(double p, double gap, double q, double scale = 1);

// Loads OBJ text with hearthray::load_obj (stream form), the mesh in `unit`.
Scene load_obj_text(const std::string& text, const std::string& name,
                    LengthUnit unit = LengthUnit::m);

}  // namespace hearthray::testing
