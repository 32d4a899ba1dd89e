// Pictures: PNG round trip, what is drawn (back faces and hidden surfaces traced past), colour
// per patch, independence of the thread count, and the colour map's perceptual properties
// checked with an independent sRGB -> CIELAB conversion (sRGB: IEC 61966-2-1:1999; CIELAB and
// Delta E 1976: CIE 15:2004, D65 white).
#include <sys/wait.h>
#include <unistd.h>

#include <array>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <map>
#include <set>
#include <string>
#include <vector>

#include "hearthray/error.hpp"
#include "hearthray/render.hpp"
#include "support/meshes.hpp"

using namespace hearthray;

namespace {

struct Lab {
  double L, a, b;
};

Lab srgb_to_lab(double r, double g, double b) {
  auto linear = [](double c) {
    return c <= 0.04045 ? c / 12.92 : std::pow((c + 0.055) / 1.055, 2.4);
  };
  const double R = linear(r), G = linear(g), B = linear(b);
  const double X = 0.4124 * R + 0.3576 * G + 0.1805 * B;
  const double Y = 0.2126 * R + 0.7152 * G + 0.0722 * B;
  const double Z = 0.0193 * R + 0.1192 * G + 0.9505 * B;
  auto f = [](double t) {
    const double d = 6.0 / 29.0;
    return t > d * d * d ? std::cbrt(t) : t / (3 * d * d) + 4.0 / 29.0;
  };
  const double fx = f(X / 0.95047), fy = f(Y), fz = f(Z / 1.08883);
  return {116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)};
}
Lab lab_of(const Colour& c) {
  return srgb_to_lab(c.r, c.g, c.b);
}
Lab lab_of(const Rgb& c) {
  return srgb_to_lab(c.r / 255.0, c.g / 255.0, c.b / 255.0);
}
double delta_e(const Lab& p, const Lab& q) {
  return std::sqrt((p.L - q.L) * (p.L - q.L) + (p.a - q.a) * (p.a - q.a) +
                   (p.b - q.b) * (p.b - q.b));
}

// The 8-bit colour render() gives a patch of value t (flat colour, no shading, no edges).
Rgb quantised(const Colour& c) {
  auto q = [](double v) { return std::uint8_t(std::lround(v * 255)); };
  return {q(c.r), q(c.g), q(c.b)};
}

// Plain options: exact patch colours in every pixel that one face covers.
RenderOptions flat_options(int width = 240, int height = 180) {
  RenderOptions o;
  o.width = width;
  o.height = height;
  o.shading = 0;
  o.edges = false;
  o.supersampling = 1;
  return o;
}

// Pixel counts by colour in the left 3/5 of the picture (the model's part; the panel on the
// right takes at most 2/5).
std::map<std::array<int, 3>, int> model_colours(const Image& image) {
  std::map<std::array<int, 3>, int> counts;
  for (int y = 0; y < image.height; ++y)
    for (int x = 0; x < image.width * 3 / 5; ++x) {
      const Rgb c = image.at(x, y);
      ++counts[{c.r, c.g, c.b}];
    }
  return counts;
}
int pixels_of(const Image& image, const Rgb& c) {
  const auto counts = model_colours(image);
  const auto it = counts.find({c.r, c.g, c.b});
  return it == counts.end() ? 0 : it->second;
}

PatchField values_field(const PatchSet& patches, const std::vector<double>& per_surface) {
  PatchField f{"value", "K", {}};
  for (const Patch& p : patches.patches) f.values.push_back(per_surface[p.surface]);
  return f;
}

std::string temp_path(const std::string& name) {
  return (std::filesystem::temp_directory_path() /
          ("hearthray_test_render_" + std::to_string(::getpid()) + "_" + name))
      .string();
}

}  // namespace

TEST_CASE("render: the PNG decodes with the requested size and the same pixels", "[render]") {
  const Scene scene = testing::load_obj_text(testing::unit_cube_obj(), "cube");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  RenderOptions o;
  o.width = 320;
  o.height = 200;
  o.title = "cube, surface areas";
  const Image image = render(scene, patches, tracer, patch_area_field(patches), o).raster();
  REQUIRE(image.width == 320);
  REQUIRE(image.height == 200);
  const std::string path = temp_path("roundtrip.png");
  write_png(path, image);
  const Image back = read_png(path);
  std::remove(path.c_str());
  CHECK(back.width == 320);
  CHECK(back.height == 200);
  CHECK(back.rgb == image.rgb);

  const std::string junk = temp_path("junk.png");
  std::ofstream(junk) << "not a picture";
  CHECK_THROWS_AS(read_png(junk), InputError);
  std::remove(junk.c_str());
  CHECK_THROWS_AS(write_png("/nonexistent-folder/x.png", image), InputError);
}

TEST_CASE("render: an inward-facing cube seen from outside shows its far inner faces", "[render]") {
  // box_obj: floor, roof, south, north, west, east, normals inward. The default camera looks
  // from (+x, -y, +z): east, south and roof turn their backs to it and are passed through;
  // west, north and floor are seen from inside.
  const Scene scene = testing::load_obj_text(testing::unit_cube_obj(), "cube");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  const std::vector<double> value{0, 1, 2, 3, 4, 5};
  const Image image =
      render(scene, patches, tracer, values_field(patches, value), flat_options()).raster();
  const int area = image.width * 3 / 5 * image.height;
  for (const char* name : {"floor", "north", "west"}) {
    const int s = scene.find_surface(name);
    CAPTURE(name);
    CHECK(pixels_of(image, quantised(sequential_colour(value[std::size_t(s)] / 5))) > area / 50);
  }
  for (const char* name : {"roof", "south", "east"}) {
    const int s = scene.find_surface(name);
    CAPTURE(name);
    CHECK(pixels_of(image, quantised(sequential_colour(value[std::size_t(s)] / 5))) == 0);
  }
}

TEST_CASE("render: a field that varies shows several colours, a constant one a single colour",
          "[render]") {
  const Scene scene = testing::load_obj_text(testing::box_obj(1, 2, 1.5), "box");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  RenderOptions o = flat_options();
  const Rgb bg = o.background;

  auto colours_in_model = [&](const PatchField& field) {
    std::set<std::array<int, 3>> colours;
    for (const auto& [c, n] : model_colours(render(scene, patches, tracer, field, o).raster()))
      if (c != std::array<int, 3>{bg.r, bg.g, bg.b} && n > 20) colours.insert(c);
    return colours.size();
  };
  CHECK(colours_in_model(values_field(patches, {300, 310, 320, 330, 340, 350})) == 3);
  CHECK(colours_in_model(values_field(patches, {300, 300, 300, 300, 300, 300})) == 1);
}

TEST_CASE("render: a hidden surface shows what is behind it", "[render]") {
  // A small square at z = 1 in front of a large one at z = 0, both facing the camera above.
  const std::string obj =
      "v -2 -2 0\nv 2 -2 0\nv 2 2 0\nv -2 2 0\n"
      "v -0.5 -0.5 1\nv 0.5 -0.5 1\nv 0.5 0.5 1\nv -0.5 0.5 1\n"
      "g far\nf 1 2 3 4\ng near\nf 5 6 7 8\n";
  const Scene scene = testing::load_obj_text(obj, "layers");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  const PatchField field = values_field(patches, {0.0, 1.0});  // far 0, near 1
  RenderOptions o = flat_options(200, 160);
  o.camera = Vec3{0, 0, 6};
  o.target = Vec3{0, 0, 0};
  o.up = {0, 1, 0};
  const Rgb far = quantised(sequential_colour(0)), near = quantised(sequential_colour(1));

  // The middle of the model's part of the picture (the panel takes the right-hand side).
  const Image shown = render(scene, patches, tracer, field, o).raster();
  int centre_x = 0;
  for (int x = 0; x < shown.width; ++x)
    if (shown.at(x, shown.height / 2) == near) centre_x = x;  // right end of the near square
  REQUIRE(centre_x > 0);
  const int x = centre_x - 3;
  const int y = shown.height / 2;
  CHECK(shown.at(x, y) == near);

  o.hidden = {"near"};
  const Image cut = render(scene, patches, tracer, field, o).raster();
  CHECK(cut.at(x, y) == far);
  CHECK(pixels_of(cut, near) == 0);

  o.hidden = {"nowhere"};
  CHECK_THROWS_AS(render(scene, patches, tracer, field, o), InputError);
}

TEST_CASE("render: the picture does not depend on the thread count", "[render]") {
  const Scene scene = testing::load_obj_text(testing::box_obj(1, 2, 1.5, 6), "box");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  RenderOptions o;
  o.width = 300;
  o.height = 220;
  o.title = "threads";
  o.categories = scene.surface_names();
  o.threads = 1;
  const Image one = render(scene, patches, tracer, surface_index_field(patches), o).raster();
  o.threads = 2;
  const Image two = render(scene, patches, tracer, surface_index_field(patches), o).raster();
  CHECK(one.rgb == two.rgb);
}

TEST_CASE("render: title and colour bar are drawn, bad options are input errors", "[render]") {
  const Scene scene = testing::load_obj_text(testing::unit_cube_obj(), "cube");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  RenderOptions o;
  o.width = 400;
  o.height = 300;
  const PatchField field = values_field(patches, {0, 1, 2, 3, 4, 5});
  const Image plain = render(scene, patches, tracer, field, o).raster();
  o.title = "Title 123";
  const Image titled = render(scene, patches, tracer, field, o).raster();
  int ink = 0;  // dark pixels in the top band
  for (int y = 0; y < 15; ++y)
    for (int x = 0; x < 100; ++x) ink += titled.at(x, y).r < 100 && plain.at(x, y).r > 200;
  CHECK(ink > 20);
  // The colour bar holds both ends of the map on the right-hand side (within a CIE76 Delta E
  // of 3, about the smallest difference seen side by side (common practice, recalled): the bar
  // is a smooth gradient drawn anti-aliased).
  const auto holds = [&](const Rgb& c) {
    for (int y = 0; y < plain.height; ++y)
      for (int x = plain.width * 3 / 5; x < plain.width; ++x)
        if (delta_e(lab_of(plain.at(x, y)), lab_of(c)) < 3) return true;
    return false;
  };
  CHECK(holds(quantised(sequential_colour(0))));
  CHECK(holds(quantised(sequential_colour(1))));

  RenderOptions bad = o;
  bad.fov_degrees = 0;
  CHECK_THROWS_AS(render(scene, patches, tracer, field, bad), InputError);
  bad = o;
  bad.range_min = 5;
  bad.range_max = 1;
  CHECK_THROWS_AS(render(scene, patches, tracer, field, bad), InputError);
  const PatchField short_field{"x", "", {1.0}};
  CHECK_THROWS_AS(render(scene, patches, tracer, short_field, o), InputError);
}

TEST_CASE("colour map: lightness rises strictly, equal steps give nearly equal differences",
          "[render]") {
  // Common practice for sequential maps (no single published threshold): L* monotonic, and the
  // CIE76 difference between neighbouring samples constant to within a few per cent.
  const int n = 256;
  std::vector<Lab> lab;
  for (int k = 0; k < n; ++k) lab.push_back(lab_of(sequential_colour(double(k) / (n - 1))));
  double lo = 1e9, hi = 0;
  for (int k = 1; k < n; ++k) {
    CHECK(lab[std::size_t(k)].L > lab[std::size_t(k - 1)].L);
    const double d = delta_e(lab[std::size_t(k)], lab[std::size_t(k - 1)]);
    lo = std::min(lo, d);
    hi = std::max(hi, d);
  }
  CHECK(hi / lo < 1.05);
  CHECK(lab.front().L < 20);  // a wide lightness range: dark to pale
  CHECK(lab.back().L > 90);

  // Still strictly rising after rounding to 8 bits, at 64 levels.
  double previous = -1;
  for (int k = 0; k < 64; ++k) {
    const double L = lab_of(quantised(sequential_colour(k / 63.0))).L;
    CHECK(L > previous);
    previous = L;
  }
  // Out-of-range and NaN values map to the ends.
  CHECK(quantised(sequential_colour(-3)) == quantised(sequential_colour(0)));
  CHECK(quantised(sequential_colour(7)) == quantised(sequential_colour(1)));
}

TEST_CASE("colour map: our own blue-teal-sand path, no purple and no saturated yellow",
          "[render]") {
  // Design facts of the map (our own; no published map copied): it runs from ink blue through
  // teal to a pale cream. Hue angles h = atan2(b*, a*) in degrees: purple, magenta and red
  // (300..360, 0..40) never where the colour has any chroma; the light end nearly neutral, so the
  // map cannot pass for the common purple-to-yellow plotting default (whose light end is a
  // saturated yellow, chroma far above 40, and whose middle is no teal).
  for (int k = 0; k <= 100; ++k) {
    const Lab c = lab_of(sequential_colour(k / 100.0));
    const double chroma = std::hypot(c.a, c.b);
    double hue = std::atan2(c.b, c.a) * 180 / 3.14159265358979323846;
    if (hue < 0) hue += 360;
    CAPTURE(k, c.L, c.a, c.b, hue, chroma);
    CHECK(chroma < 40);
    if (chroma > 8) CHECK((hue >= 40 && hue < 300));  // no purple, magenta or red
  }
  const Lab middle = lab_of(sequential_colour(0.5));
  CHECK(middle.a < -5);  // teal
  CHECK(std::hypot(lab_of(sequential_colour(1)).a, lab_of(sequential_colour(1)).b) < 20);
}

TEST_CASE("category palette: colours clearly apart", "[render]") {
  for (int i = 0; i < kCategoryColours; ++i)
    for (int j = i + 1; j < kCategoryColours; ++j) {
      CAPTURE(i, j);
      CHECK(delta_e(lab_of(category_colour(std::size_t(i))),
                    lab_of(category_colour(std::size_t(j)))) > 15);
    }
  CHECK(quantised(category_colour(kCategoryColours)) == quantised(category_colour(0)));
}

TEST_CASE("render: the default view is from above and in front, never from under the hearth",
          "[render]") {
  // Inside a closed box, two heating elements face down just under the roof, as in a furnace
  // with roof elements: they show only from below, where more surfaces show (roof, two walls,
  // two elements against floor and two walls). The default still looks from above and in
  // front (-y), at the hearth; a camera placed below shows the elements.
  std::string obj = testing::box_obj(3, 2, 1);
  obj +=
      "v 0.4 0.5 0.9\nv 1.4 0.5 0.9\nv 1.4 1.5 0.9\nv 0.4 1.5 0.9\n"
      "g element_1\nf -4 -1 -2 -3\n"  // clockwise seen from above: facing down
      "v 1.6 0.5 0.9\nv 2.6 0.5 0.9\nv 2.6 1.5 0.9\nv 1.6 1.5 0.9\n"
      "g element_2\nf -4 -1 -2 -3\n";
  const Scene scene = testing::load_obj_text(obj, "furnace");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  std::vector<double> value(scene.surfaces.size(), 0.0);
  for (const char* name : {"element_1", "element_2"}) {
    const int s = scene.find_surface(name);
    REQUIRE(s >= 0);
    REQUIRE(scene.normal(scene.surfaces[std::size_t(s)].first_triangle).z < -0.99);
    value[std::size_t(s)] = 1;
  }
  const Vec3 away = default_view_direction(scene, patches, tracer, flat_options());
  CHECK(away.z > 0.4);   // above
  CHECK(away.y < -0.4);  // in front
  const PatchField field = values_field(patches, value);
  // Pixels of the elements' colour in the model's part of the picture (the left half; the
  // colour bar on the right holds every colour).
  auto element_pixels = [&](const RenderOptions& o) {
    const Image image = render(scene, patches, tracer, field, o).raster();
    const Rgb want = quantised(sequential_colour(1));
    int n = 0;
    for (int y = 0; y < image.height; ++y)
      for (int x = 0; x < image.width / 2; ++x) n += image.at(x, y) == want;
    return n;
  };
  CHECK(element_pixels(flat_options()) == 0);
  RenderOptions below = flat_options();
  below.camera = Vec3{1.5, -4, -2.5};
  CHECK(element_pixels(below) > 200);
}

TEST_CASE("fields: view factor to a surface sums over its patches, both sides", "[render]") {
  Scene scene = testing::load_obj_text(testing::parallel_rectangles_obj(1, 1, 1), "plates");
  scene.surfaces[std::size_t(scene.find_surface("upper"))].two_sided = true;
  const PatchSet patches = make_surface_patches(scene);  // lower, upper (front), upper (back)
  REQUIRE(patches.size() == 3);
  // Arbitrary test numbers, not physical factors.
  ViewFactors vf;
  vf.names = {"lower", "upper (front)", "upper (back)"};
  vf.areas = {1, 1, 1};
  vf.rays = {10, 10, 10};
  vf.to_surroundings = {0, 0, 0};
  vf.to_back_faces = {0, 0, 0};
  vf.F.resize(3, 3);
  vf.F.insert(0, 1) = 0.25;
  vf.F.insert(0, 2) = 0.125;
  vf.F.insert(1, 0) = 0.5;
  vf.F.makeCompressed();
  const PatchField to_upper =
      view_factor_to_surface_field(scene, patches, vf, std::uint32_t(scene.find_surface("upper")));
  CHECK(to_upper.values == std::vector<double>{0.375, 0, 0});
  CHECK(to_upper.name == "view factor to upper");
  const PatchField to_lower =
      view_factor_to_surface_field(scene, patches, vf, std::uint32_t(scene.find_surface("lower")));
  CHECK(to_lower.values == std::vector<double>{0, 0.5, 0});
  CHECK(patch_area_field(patches).values == std::vector<double>{1, 1, 1});
  CHECK(surface_index_field(patches).values == std::vector<double>{0, 1, 1});
}

TEST_CASE("render command: picture of the requested size, clear errors", "[render]") {
  const std::filesystem::path dir = temp_path("cli");
  std::filesystem::create_directories(dir);
  const std::string mesh = (dir / "cube.obj").string();
  std::ofstream(mesh) << testing::unit_cube_obj();
  const std::string out = (dir / "cube.png").string();
  auto run = [&](const std::string& args) {
    const std::string cmd = std::string(HEARTHRAY_CLI) + " render " + mesh + " " + args + " >" +
                            (dir / "out.txt").string() + " 2>" + (dir / "err.txt").string();
    const int status = std::system(cmd.c_str());
    return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  };
  auto err = [&] {
    std::ifstream in(dir / "err.txt");
    return std::string(std::istreambuf_iterator<char>(in), {});
  };

  REQUIRE(run("-o " + out +
              " --field view-factor-to=floor --rays 2000 --width 200 --height 150"
              " --hide roof -q") == 0);
  const Image image = read_png(out);
  CHECK(image.width == 200);
  CHECK(image.height == 150);

  CHECK(run("-o " + out + " --field temperature") == 2);
  CHECK(err().find("error: --field temperature is a solved field: give --results DIR") !=
        std::string::npos);
  CHECK(run("-o " + out + " --field heat") == 2);
  CHECK(err().find("error: unknown --field 'heat'") != std::string::npos);
  CHECK(run("-o " + out + " --field view-factor-to=ceiling") == 2);
  CHECK(err().find("floor, roof, south, north, west, east") != std::string::npos);
  CHECK(run("-o " + out + " --hide chimney") == 2);
  CHECK(err().find("chimney") != std::string::npos);
  CHECK(run("-o " + out + " --camera 0.5,0.5,0.5 --target 0.5,0.5,0.5") == 2);
  std::filesystem::remove_all(dir);
}
