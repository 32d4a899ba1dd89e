// Pictures as the project writes them: a drawing of fixed size in pixels (a raster part, such
// as the traced view of a model, composed with vector lines and text), written as PNG, SVG or
// PDF. Raster images (8-bit sRGB) are read and written as PNG.
//
// Drawn with Cairo; the text is set in DejaVu Sans (Debian package fonts-dejavu-core), found
// through fontconfig. The same picture gives the same PNG bytes on every run: nothing that
// varies (time, host) is written into it.
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <vector>

namespace hearthray {

struct Rgb {
  std::uint8_t r = 0, g = 0, b = 0;
  bool operator==(const Rgb& o) const { return r == o.r && g == o.g && b == o.b; }
  bool operator!=(const Rgb& o) const { return !(*this == o); }
};

// 8-bit sRGB image, rows top to bottom.
struct Image {
  int width = 0, height = 0;
  std::vector<std::uint8_t> rgb;  // 3 * width * height

  Rgb at(int x, int y) const {
    const std::size_t i = 3 * (std::size_t(y) * std::size_t(width) + std::size_t(x));
    return {rgb[i], rgb[i + 1], rgb[i + 2]};
  }
};

// PNG, 8-bit RGB. Throw InputError naming the file when it cannot be written or read.
void write_png(const std::string& path, const Image& image);
Image read_png(const std::string& path);

struct PictureData;  // the recorded drawing (Cairo), private to the library

// A finished drawing. Copies share the drawing; it is never changed after it is made.
class Picture {
 public:
  Picture() = default;
  explicit Picture(std::shared_ptr<const PictureData> data);
  int width() const;
  int height() const;
  // The drawing at one pixel per unit, anti-aliased, on an opaque background.
  Image raster() const;
  const PictureData* data() const { return data_.get(); }

 private:
  std::shared_ptr<const PictureData> data_;
};

// Writes the picture in the format its file name ends in: ".svg" (vector, with raster parts
// embedded), ".pdf" (vector, one page of the picture's size in points) or anything else as
// PNG. The file appears whole or not at all. Throws InputError naming the file when it cannot
// be written.
void write_picture(const std::string& path, const Picture& picture);

}  // namespace hearthray
