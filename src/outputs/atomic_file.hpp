// Files that appear whole or not at all: written under a temporary name beside the target
// (same folder, so the rename stays on one file system), then renamed over it. A failed or
// interrupted write leaves the old file (or none) and removes the temporary one.
#pragma once

#include <functional>
#include <iosfwd>
#include <string>

namespace hearthray {

// `write` creates the file at the path it is given (the temporary name). Throws InputError
// naming `path` when `write` throws, or the rename fails.
void write_file_atomically(const std::string& path,
                           const std::function<void(const std::string& temporary)>& write);

// The same for a writer of a stream (opened binary); a stream in a failed state after `write`
// (disk full) is an error.
void write_stream_atomically(const std::string& path,
                             const std::function<void(std::ostream& out)>& write);

}  // namespace hearthray
