// The drawing layer: a Cairo recording surface replayed onto an image (PNG), an SVG or a PDF
// surface, so every format shows the same drawing. Text in DejaVu Sans, found by fontconfig
// and loaded with FreeType; hinting is off so that text has the same metrics in every format.
#include "pictures/canvas.hpp"

#include <cairo-ft.h>
#include <cairo-pdf.h>
#include <cairo-svg.h>
#include <cairo.h>
#include <fontconfig/fontconfig.h>
#include <ft2build.h>
#include FT_FREETYPE_H

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>

#include "hearthray/error.hpp"

namespace hearthray {

struct PictureData {
  cairo_surface_t* recording = nullptr;
  int width = 0, height = 0;
  ~PictureData() {
    if (recording) cairo_surface_destroy(recording);
  }
};

Picture::Picture(std::shared_ptr<const PictureData> data) : data_(std::move(data)) {}
int Picture::width() const {
  return data_ ? data_->width : 0;
}
int Picture::height() const {
  return data_ ? data_->height : 0;
}

namespace {

void replay(cairo_surface_t* target, const PictureData& data) {
  cairo_t* cr = cairo_create(target);
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_paint(cr);
  cairo_set_source_surface(cr, data.recording, 0, 0);
  cairo_paint(cr);
  cairo_destroy(cr);
}

// Writes to `path` + ".part" with `write`, then renames, so that the file appears whole.
template <class Write>
void write_whole(const std::string& path, Write write) {
  const std::string part = path + ".part";
  std::string problem = write(part);
  std::error_code ec;
  if (problem.empty()) {
    std::filesystem::rename(part, path, ec);
    if (ec) problem = ec.message();
  }
  if (!problem.empty()) {
    std::filesystem::remove(part, ec);
    throw InputError("cannot write '" + path + "': " + problem);
  }
}

std::string vector_file(const std::string& part, const PictureData& data, bool pdf) {
  cairo_surface_t* s = pdf ? cairo_pdf_surface_create(part.c_str(), data.width, data.height)
                           : cairo_svg_surface_create(part.c_str(), data.width, data.height);
  if (pdf) {
    // No creation date: the same picture gives the same file.
    cairo_pdf_surface_set_metadata(s, CAIRO_PDF_METADATA_CREATE_DATE, "");
    cairo_pdf_surface_set_metadata(s, CAIRO_PDF_METADATA_CREATOR, "hearthray");
  } else if (cairo_surface_status(s) == CAIRO_STATUS_SUCCESS) {
    cairo_svg_surface_set_document_unit(s, CAIRO_SVG_UNIT_PX);
  }
  if (cairo_surface_status(s) == CAIRO_STATUS_SUCCESS) replay(s, data);
  cairo_surface_finish(s);
  const cairo_status_t status = cairo_surface_status(s);
  cairo_surface_destroy(s);
  return status == CAIRO_STATUS_SUCCESS ? "" : cairo_status_to_string(status);
}

}  // namespace

Image Picture::raster() const {
  Image image;
  if (!data_) return image;
  image.width = data_->width;
  image.height = data_->height;
  cairo_surface_t* s = cairo_image_surface_create(CAIRO_FORMAT_RGB24, image.width, image.height);
  replay(s, *data_);
  cairo_surface_flush(s);
  const unsigned char* bytes = cairo_image_surface_get_data(s);
  const int stride = cairo_image_surface_get_stride(s);
  image.rgb.resize(3 * std::size_t(image.width) * std::size_t(image.height));
  for (int y = 0; y < image.height; ++y) {
    const auto* row = reinterpret_cast<const std::uint32_t*>(bytes + std::size_t(y) * stride);
    for (int x = 0; x < image.width; ++x) {
      std::uint8_t* px = &image.rgb[3 * (std::size_t(y) * image.width + std::size_t(x))];
      px[0] = std::uint8_t(row[x] >> 16);
      px[1] = std::uint8_t(row[x] >> 8);
      px[2] = std::uint8_t(row[x]);
    }
  }
  cairo_surface_destroy(s);
  return image;
}

void write_picture(const std::string& path, const Picture& picture) {
  if (!picture.data()) throw InputError("cannot write '" + path + "': the picture is empty");
  std::string ext = std::filesystem::path(path).extension().string();
  std::transform(ext.begin(), ext.end(), ext.begin(),
                 [](unsigned char c) { return char(std::tolower(c)); });
  if (ext == ".svg" || ext == ".pdf") {
    write_whole(path, [&](const std::string& part) {
      return vector_file(part, *picture.data(), ext == ".pdf");
    });
    return;
  }
  const Image image = picture.raster();
  write_whole(path, [&](const std::string& part) -> std::string {
    try {
      write_png(part, image);
    } catch (const InputError&) {
      return "the PNG could not be written";
    }
    return "";
  });
}

namespace pictures {
namespace {

// DejaVu Sans, regular and bold, as Cairo font faces (made once, kept for the process).
struct Fonts {
  cairo_font_face_t* face[2] = {nullptr, nullptr};
  std::string problem;
};

std::string font_file(const char* pattern_text, std::string* family) {
  FcPattern* pattern = FcNameParse(reinterpret_cast<const FcChar8*>(pattern_text));
  FcConfigSubstitute(nullptr, pattern, FcMatchPattern);
  FcDefaultSubstitute(pattern);
  FcResult result;
  FcPattern* match = FcFontMatch(nullptr, pattern, &result);
  std::string file;
  if (match) {
    FcChar8* f = nullptr;
    FcChar8* fam = nullptr;
    if (FcPatternGetString(match, FC_FILE, 0, &f) == FcResultMatch)
      file = reinterpret_cast<const char*>(f);
    if (FcPatternGetString(match, FC_FAMILY, 0, &fam) == FcResultMatch)
      *family = reinterpret_cast<const char*>(fam);
    FcPatternDestroy(match);
  }
  FcPatternDestroy(pattern);
  return file;
}

Fonts load_fonts() {
  Fonts fonts;
  static FT_Library library = nullptr;
  if (!FcInit() || FT_Init_FreeType(&library)) {
    fonts.problem = "fontconfig or FreeType could not start";
    return fonts;
  }
  const char* patterns[2] = {"DejaVu Sans:style=Book", "DejaVu Sans:style=Bold"};
  for (int k = 0; k < 2; ++k) {
    std::string family;
    const std::string file = font_file(patterns[k], &family);
    FT_Face face = nullptr;
    if (family != "DejaVu Sans" || file.empty() || FT_New_Face(library, file.c_str(), 0, &face)) {
      fonts.problem =
          "the font DejaVu Sans is not installed (pictures need it): install the Debian "
          "package fonts-dejavu-core, for example with scripts/setup";
      return fonts;
    }
    fonts.face[k] = cairo_ft_font_face_create_for_ft_face(face, 0);
  }
  return fonts;
}

cairo_font_face_t* font_face(Weight weight) {
  static const Fonts fonts = load_fonts();
  if (!fonts.problem.empty()) throw InputError(fonts.problem);
  return fonts.face[weight == Weight::bold ? 1 : 0];
}

void set_colour(cairo_t* cr, const Colour& c) {
  cairo_set_source_rgb(cr, c.r, c.g, c.b);
}

}  // namespace

Canvas::Canvas(int width, int height) : width_(width), height_(height) {
  font_face(Weight::regular);  // a missing font fails here, before anything is drawn
  const cairo_rectangle_t extents{0, 0, double(width), double(height)};
  surface_ = cairo_recording_surface_create(CAIRO_CONTENT_COLOR_ALPHA, &extents);
  cr_ = cairo_create(surface_);
  cairo_font_options_t* options = cairo_font_options_create();
  cairo_font_options_set_hint_style(options, CAIRO_HINT_STYLE_NONE);
  cairo_font_options_set_hint_metrics(options, CAIRO_HINT_METRICS_OFF);
  cairo_font_options_set_antialias(options, CAIRO_ANTIALIAS_GRAY);
  cairo_set_font_options(cr_, options);
  cairo_font_options_destroy(options);
}

Canvas::~Canvas() {
  if (cr_) cairo_destroy(cr_);
  if (surface_) cairo_surface_destroy(surface_);
}

void Canvas::fill_rect(double x, double y, double w, double h, const Colour& c) {
  cairo_rectangle(cr_, x, y, w, h);
  set_colour(cr_, c);
  cairo_fill(cr_);
}

void Canvas::stroke_rect(double x, double y, double w, double h, double line_width,
                         const Colour& c) {
  cairo_rectangle(cr_, x, y, w, h);
  cairo_set_line_width(cr_, line_width);
  cairo_set_line_join(cr_, CAIRO_LINE_JOIN_MITER);
  set_colour(cr_, c);
  cairo_stroke(cr_);
}

void Canvas::line(double x0, double y0, double x1, double y1, double line_width, const Colour& c) {
  cairo_move_to(cr_, x0, y0);
  cairo_line_to(cr_, x1, y1);
  cairo_set_line_width(cr_, line_width);
  cairo_set_line_cap(cr_, CAIRO_LINE_CAP_ROUND);
  set_colour(cr_, c);
  cairo_stroke(cr_);
}

void Canvas::polygon(const std::vector<std::array<double, 2>>& points, const Colour* fill,
                     double line_width, const Colour& stroke) {
  if (points.empty()) return;
  for (const auto& p : points) cairo_line_to(cr_, p[0], p[1]);
  cairo_close_path(cr_);
  if (fill) {
    set_colour(cr_, *fill);
    cairo_fill_preserve(cr_);
  }
  if (line_width > 0) {
    cairo_set_line_width(cr_, line_width);
    cairo_set_line_join(cr_, CAIRO_LINE_JOIN_ROUND);
    set_colour(cr_, stroke);
    cairo_stroke(cr_);
  }
  cairo_new_path(cr_);
}

void Canvas::circle(double x, double y, double radius, const Colour* fill, double line_width,
                    const Colour& stroke) {
  cairo_new_sub_path(cr_);
  cairo_arc(cr_, x, y, radius, 0, 2 * M_PI);
  if (fill) {
    set_colour(cr_, *fill);
    cairo_fill_preserve(cr_);
  }
  if (line_width > 0) {
    cairo_set_line_width(cr_, line_width);
    set_colour(cr_, stroke);
    cairo_stroke(cr_);
  }
  cairo_new_path(cr_);
}

void Canvas::image(const Image& raster, double x, double y) {
  if (raster.width <= 0 || raster.height <= 0) return;
  cairo_surface_t* s = cairo_image_surface_create(CAIRO_FORMAT_RGB24, raster.width, raster.height);
  cairo_surface_flush(s);
  unsigned char* bytes = cairo_image_surface_get_data(s);
  const int stride = cairo_image_surface_get_stride(s);
  for (int j = 0; j < raster.height; ++j) {
    auto* row = reinterpret_cast<std::uint32_t*>(bytes + std::size_t(j) * stride);
    for (int i = 0; i < raster.width; ++i) {
      const Rgb c = raster.at(i, j);
      row[i] = 0xff000000u | std::uint32_t(c.r) << 16 | std::uint32_t(c.g) << 8 | c.b;
    }
  }
  cairo_surface_mark_dirty(s);
  cairo_set_source_surface(cr_, s, x, y);
  cairo_rectangle(cr_, x, y, raster.width, raster.height);
  cairo_fill(cr_);
  cairo_surface_destroy(s);
}

void Canvas::vertical_gradient(double x, double y, double w, double h, Colour (*colour)(double)) {
  cairo_pattern_t* p = cairo_pattern_create_linear(0, y + h, 0, y);
  constexpr int kStops = 48;
  for (int k = 0; k <= kStops; ++k) {
    const double t = double(k) / kStops;
    const Colour c = colour(t);
    cairo_pattern_add_color_stop_rgb(p, t, c.r, c.g, c.b);
  }
  cairo_rectangle(cr_, x, y, w, h);
  cairo_set_source(cr_, p);
  cairo_fill(cr_);
  cairo_pattern_destroy(p);
}

void Canvas::set_font(double size, Weight weight) const {
  cairo_set_font_face(cr_, font_face(weight));
  cairo_set_font_size(cr_, size);
}

FontMetrics Canvas::metrics(double size, Weight weight) const {
  set_font(size, weight);
  cairo_font_extents_t e;
  cairo_font_extents(cr_, &e);
  return {e.ascent, e.descent, e.height};
}

double Canvas::text_width(const std::string& utf8, double size, Weight weight) const {
  set_font(size, weight);
  cairo_text_extents_t e;
  cairo_text_extents(cr_, utf8.c_str(), &e);
  return e.x_advance;
}

void Canvas::text(double x, double y, const std::string& utf8, double size, const Colour& c,
                  Align align, Weight weight) {
  const double w = text_width(utf8, size, weight);
  if (align == Align::centre) x -= w / 2;
  if (align == Align::right) x -= w;
  cairo_move_to(cr_, x, y);
  set_colour(cr_, c);
  cairo_show_text(cr_, utf8.c_str());
  cairo_new_path(cr_);
}

Picture Canvas::finish() {
  cairo_destroy(cr_);
  cr_ = nullptr;
  const cairo_status_t status = cairo_surface_status(surface_);
  if (status != CAIRO_STATUS_SUCCESS)
    throw std::runtime_error(std::string("drawing failed: ") + cairo_status_to_string(status));
  auto data = std::make_shared<PictureData>();
  data->recording = surface_;
  data->width = width_;
  data->height = height_;
  surface_ = nullptr;
  return Picture(std::move(data));
}

}  // namespace pictures
}  // namespace hearthray
