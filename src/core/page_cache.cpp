#include "core/page_cache.hpp"

#include <fcntl.h>

namespace hearthray {

void PageCacheTrim::written_up_to(std::uint64_t end) {
  if (fd_ < 0 || end < kWindowBytes + dropped_ + kStepBytes) return;
  dropped_ = end - kWindowBytes;
  // Advice only: a kernel that ignores it leaves the pages cached, as a plain write does.
  // The range starts at 0 each time so that pages still under write-back at one call are
  // dropped at a later one.
  (void)::posix_fadvise(fd_, 0, off_t(dropped_), POSIX_FADV_DONTNEED);
}

}  // namespace hearthray
