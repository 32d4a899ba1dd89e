// PNG files through libpng's simplified API (libpng 1.6): 8-bit RGB, no time stamp, so the
// same image gives the same bytes.
#include <png.h>

#include <cstring>

#include "hearthray/error.hpp"
#include "hearthray/picture.hpp"

namespace hearthray {

void write_png(const std::string& path, const Image& image) {
  if (image.width <= 0 || image.height <= 0 ||
      image.rgb.size() != 3 * std::size_t(image.width) * std::size_t(image.height))
    throw InputError("cannot write '" + path + "': the image is empty or its size is wrong");
  png_image png;
  std::memset(&png, 0, sizeof png);
  png.version = PNG_IMAGE_VERSION;
  png.width = png_uint_32(image.width);
  png.height = png_uint_32(image.height);
  png.format = PNG_FORMAT_RGB;
  if (!png_image_write_to_file(&png, path.c_str(), 0, image.rgb.data(), 0, nullptr)) {
    const std::string message = png.message;
    png_image_free(&png);
    throw InputError("cannot write '" + path + "': " + message);
  }
}

Image read_png(const std::string& path) {
  png_image png;
  std::memset(&png, 0, sizeof png);
  png.version = PNG_IMAGE_VERSION;
  if (!png_image_begin_read_from_file(&png, path.c_str()))
    throw InputError("cannot read '" + path + "' as PNG: " + png.message);
  png.format = PNG_FORMAT_RGB;
  Image image;
  image.width = int(png.width);
  image.height = int(png.height);
  image.rgb.resize(PNG_IMAGE_SIZE(png));
  if (!png_image_finish_read(&png, nullptr, image.rgb.data(), 0, nullptr)) {
    const std::string message = png.message;
    png_image_free(&png);
    throw InputError("cannot read '" + path + "' as PNG: " + message);
  }
  return image;
}

}  // namespace hearthray
