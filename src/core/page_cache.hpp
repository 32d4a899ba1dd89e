// Long files written as a stream without filling the page cache with them.
//
// A write lands in the kernel's page cache first; a 1.5 GB matrix file would take 1.5 GB of
// fresh pages, pushing out what the user's other programs had cached, and on a virtual machine
// whose free memory goes back to the host, each of those pages costs a fault when first touched
// (writing 1.4 GB took 1.9 CPU-s there against 0.3 s into pages just freed). Letting the kernel
// drop the pages of what was written a little while ago (POSIX_FADV_DONTNEED) starts their
// write-back and recycles the pages once they are on disk, so a stream written more slowly
// than the disk takes holds only its last window in the cache. The file's bytes are the same;
// pages not yet on disk (a slow disk) simply stay cached, as without the advice.
#pragma once

#include <cstdint>

namespace hearthray {

class PageCacheTrim {
 public:
  // Pages further than this behind the end written are dropped (once on disk).
  static constexpr std::uint64_t kWindowBytes = std::uint64_t{64} << 20;
  // The advice is given each time the end has moved on by this much.
  static constexpr std::uint64_t kStepBytes = std::uint64_t{16} << 20;

  // `fd`: the open file written; -1 does nothing.
  explicit PageCacheTrim(int fd = -1) : fd_(fd) {}
  // The bytes [0, end) of the file are written.
  void written_up_to(std::uint64_t end);

 private:
  int fd_ = -1;
  std::uint64_t dropped_ = 0;  // [0, dropped_) advised already
};

}  // namespace hearthray
