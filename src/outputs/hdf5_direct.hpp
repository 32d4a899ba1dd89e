// A file driver for HDF5 (a virtual file driver, registered with H5FDregister) that writes
// the file in whole aligned pages through O_DIRECT, past the kernel's page cache.
//
// Why: the matrix file of a large model is gigabytes, and a buffered write() copies every byte
// into the page cache first. On the 2-core benchmark machine that copy cost 2.7 CPU seconds per
// GiB (`dd bs=8M count=128` of /dev/zero: 2.8 s wall, 2.7 s system time), against 0.55 s wall
// and almost no CPU with oflag=direct; perf put it at 5 % of a whole `solve -o` of 98,592
// patches. The pages go to the device by DMA instead.
//
// How: the driver keeps a few pages of the file in memory (page_bytes each, aligned for
// O_DIRECT), takes HDF5's writes and reads into them, and writes a page whole when it is
// evicted (least recently used first) or at a flush. A page evicted and touched again is read
// back first, so any write pattern gives the same bytes. Parts of the file HDF5 never wrote
// read as zeros, as holes of an ordinary file do; the file is cut to HDF5's end of file on
// close. The allocation properties HDF5 sees (feature flags, free-list map, address limit)
// are those of its default driver (sec2), so the file is byte for byte the one the default
// driver writes (tests/test_hdf5_file.cpp compares them). Where the file system refuses
// O_DIRECT (tmpfs, some network file systems) the same pages are written through the page
// cache.
#pragma once

#include <hdf5.h>

#include <cstddef>

namespace hearthray::hdf5 {

struct DirectOptions {
  std::size_t page_bytes = std::size_t{1} << 20;  // a multiple of 4096
  std::size_t resident_pages = 16;                // pages held in memory at most
  bool direct = true;  // false: open without O_DIRECT (the same pages, through the cache)
};

// Makes `fapl` (a file access property list) use the driver with these options. Returns a
// negative value when HDF5 refuses.
herr_t use_direct_driver(hid_t fapl, const DirectOptions& options = DirectOptions());

}  // namespace hearthray::hdf5
