#include "outputs/atomic_file.hpp"

#include <unistd.h>

#include <filesystem>
#include <fstream>

#include "hearthray/error.hpp"

namespace hearthray {

void write_file_atomically(const std::string& path,
                           const std::function<void(const std::string& temporary)>& write) {
  // The process id keeps two runs writing the same target from sharing a temporary file.
  const std::string temporary = path + ".part" + std::to_string(::getpid());
  std::error_code ec;
  try {
    write(temporary);
  } catch (...) {
    std::filesystem::remove(temporary, ec);
    throw;
  }
  std::filesystem::rename(temporary, path, ec);
  if (ec) {
    std::error_code ignored;
    std::filesystem::remove(temporary, ignored);
    throw InputError("cannot write '" + path + "': " + ec.message());
  }
}

void write_stream_atomically(const std::string& path,
                             const std::function<void(std::ostream& out)>& write) {
  write_file_atomically(path, [&](const std::string& temporary) {
    std::ofstream out(temporary, std::ios::binary | std::ios::trunc);
    if (!out) throw InputError("cannot open '" + path + "' for writing");
    write(out);
    out.flush();
    if (!out) throw InputError("writing '" + path + "' failed (disk full or no permission?)");
  });
}

}  // namespace hearthray
