#include "core/files.hpp"

#include <filesystem>
#include <fstream>

#include "core/text.hpp"
#include "hearthray/error.hpp"

namespace hearthray {

std::string read_regular_file(const std::string& path, const std::string& what,
                              std::uint64_t max_bytes) {
  namespace fs = std::filesystem;
  std::error_code ec;
  const fs::file_status status = fs::status(path, ec);
  if (!fs::exists(status)) throw InputError(what + " '" + path + "' does not exist");
  if (fs::is_directory(status)) throw InputError(what + " '" + path + "' is a folder, not a file");
  if (!fs::is_regular_file(status)) {
    throw InputError(what + " '" + path +
                     "' is not a regular file (a device, FIFO or socket); give a file on disk");
  }
  const std::uintmax_t size = fs::file_size(path, ec);
  if (ec) throw InputError(what + " '" + path + "' cannot be read: " + ec.message());
  if (size > max_bytes) {
    throw InputError(what + " '" + path + "' is " + rounded("%.3g", double(size) / 1e6) +
                     " MB, more than the " + rounded("%.3g", double(max_bytes) / 1e6) +
                     " MB read at most");
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(what + " '" + path + "' cannot be opened for reading");
  std::string bytes(static_cast<std::size_t>(size), '\0');
  in.read(bytes.data(), static_cast<std::streamsize>(size));
  if (in.bad() || static_cast<std::uintmax_t>(in.gcount()) != size) {
    throw InputError(what + " '" + path + "' could not be read (it changed while being read?)");
  }
  return bytes;
}

}  // namespace hearthray
