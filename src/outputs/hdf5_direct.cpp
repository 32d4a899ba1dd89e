// The O_DIRECT page driver for HDF5 (see hdf5_direct.hpp). The callbacks follow the contract
// of HDF5 1.10's virtual file layer (H5FDpublic.h) and mirror what its default sec2 driver
// does with addresses: reads and writes must lie below the end of allocated space (EOA); the
// end of file (EOF) is the end of the last byte written, or the EOA after a truncate; bytes
// never written read as zeros.
#include "outputs/hdf5_direct.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <sys/vfs.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstdint>
#include <cstdlib>
#include <cstring>
#include <memory>
#include <mutex>
#include <vector>

namespace hearthray::hdf5 {
namespace {

constexpr std::size_t kAlignment = 4096;  // of buffers, offsets and lengths under O_DIRECT
// The default driver's largest address: the largest signed file offset.
constexpr haddr_t kMaxAddress = (haddr_t(1) << 63) - 1;

struct FreeAligned {
  void operator()(unsigned char* p) const { std::free(p); }
};
using PageBuffer = std::unique_ptr<unsigned char, FreeAligned>;

struct Page {
  std::uint64_t index = 0;
  PageBuffer data;
  bool dirty = false;
  std::uint64_t used = 0;  // last use, for eviction
};

// The open file. `pub` first: HDF5 sees a pointer to it as its H5FD_t.
struct DirectFile {
  H5FD_t pub;
  int fd = -1;
  DirectOptions options;
  dev_t device = 0;
  ino_t inode = 0;
  haddr_t eoa = 0, eof = 0;
  std::vector<Page> pages;    // resident, at most options.resident_pages
  std::vector<bool> on_file;  // page k has been written to the file
  std::uint64_t clock = 0;
};

// Full-length pread/pwrite; on EINVAL under O_DIRECT (an alignment the device wants and we do
// not give) the descriptor drops O_DIRECT and the call is repeated through the page cache.
bool transfer(DirectFile* f, unsigned char* data, std::size_t size, off_t offset, bool write) {
  std::size_t done = 0;
  while (done < size) {
    const ssize_t n = write ? ::pwrite(f->fd, data + done, size - done, offset + off_t(done))
                            : ::pread(f->fd, data + done, size - done, offset + off_t(done));
    if (n < 0 && errno == EINTR) continue;
    if (n < 0 && errno == EINVAL && f->options.direct) {
      const int flags = ::fcntl(f->fd, F_GETFL);
      if (flags < 0 || ::fcntl(f->fd, F_SETFL, flags & ~O_DIRECT) < 0) return false;
      f->options.direct = false;
      continue;
    }
    if (n < 0) return false;
    if (n == 0) {
      if (write) return false;
      std::memset(data + done, 0, size - done);  // past the end of the file: zeros
      return true;
    }
    done += std::size_t(n);
  }
  return true;
}

bool write_out(DirectFile* f, Page& page) {
  if (!page.dirty) return true;
  const std::size_t bytes = f->options.page_bytes;
  if (!transfer(f, page.data.get(), bytes, off_t(page.index * bytes), true)) return false;
  page.dirty = false;
  if (f->on_file.size() <= page.index) f->on_file.resize(page.index + 1, false);
  f->on_file[page.index] = true;
  return true;
}

// Page `index`, resident: read back from the file if it was written out before, else zeros.
// Null when the file could not be read or an evicted page could not be written.
Page* page_at(DirectFile* f, std::uint64_t index) {
  ++f->clock;
  for (Page& p : f->pages) {
    if (p.index == index) {
      p.used = f->clock;
      return &p;
    }
  }
  Page* slot = nullptr;
  if (f->pages.size() < f->options.resident_pages) {
    f->pages.emplace_back();
    slot = &f->pages.back();
    slot->data.reset(
        static_cast<unsigned char*>(std::aligned_alloc(kAlignment, f->options.page_bytes)));
    if (!slot->data) {
      f->pages.pop_back();
      return nullptr;
    }
  } else {
    slot = &*std::min_element(f->pages.begin(), f->pages.end(),
                              [](const Page& a, const Page& b) { return a.used < b.used; });
    if (!write_out(f, *slot)) return nullptr;
  }
  slot->index = index;
  slot->used = f->clock;
  slot->dirty = false;
  const std::size_t bytes = f->options.page_bytes;
  if (index < f->on_file.size() && f->on_file[index]) {
    if (!transfer(f, slot->data.get(), bytes, off_t(index * bytes), false)) return nullptr;
  } else {
    std::memset(slot->data.get(), 0, bytes);
  }
  return slot;
}

// Calls body(page, offset in page, offset in the range, length) over [addr, addr + size).
template <class Body>
bool for_pages(DirectFile* f, haddr_t addr, std::size_t size, Body body) {
  const std::size_t bytes = f->options.page_bytes;
  std::size_t done = 0;
  while (done < size) {
    const haddr_t at = addr + done;
    const std::size_t within = std::size_t(at % bytes);
    const std::size_t n = std::min(size - done, bytes - within);
    Page* page = page_at(f, at / bytes);
    if (page == nullptr) return false;
    body(*page, within, done, n);
    done += n;
  }
  return true;
}

bool zero_range(DirectFile* f, haddr_t from, haddr_t to) {
  return for_pages(f, from, std::size_t(to - from),
                   [](Page& p, std::size_t in, std::size_t, std::size_t n) {
                     std::memset(p.data.get() + in, 0, n);
                     p.dirty = true;
                   });
}

bool flush_pages(DirectFile* f) {
  std::sort(f->pages.begin(), f->pages.end(),
            [](const Page& a, const Page& b) { return a.index < b.index; });
  for (Page& p : f->pages)
    if (!write_out(f, p)) return false;
  return true;
}

// O_DIRECT only on the local disk file systems where it is known to be what it says (ext2/3/4
// and XFS, magic numbers of statfs(2)); elsewhere (network and cluster file systems, tmpfs,
// copy-on-write ones) the same pages go through the page cache.
bool local_disk(int fd) {
  struct statfs fs;
  if (::fstatfs(fd, &fs) != 0) return false;
  return fs.f_type == 0xEF53 || fs.f_type == 0x58465342;
}

DirectFile* file_of(H5FD_t* file) {
  return reinterpret_cast<DirectFile*>(file);
}
const DirectFile* file_of(const H5FD_t* file) {
  return reinterpret_cast<const DirectFile*>(file);
}

void* copy_options(const void* options) {
  void* copy = std::malloc(sizeof(DirectOptions));
  if (copy != nullptr) std::memcpy(copy, options, sizeof(DirectOptions));
  return copy;
}

void* get_options(H5FD_t* file) {
  return copy_options(&file_of(file)->options);
}

herr_t free_options(void* options) {
  std::free(options);
  return 0;
}

H5FD_t* open_file(const char* name, unsigned flags, hid_t fapl, haddr_t maxaddr) {
  if (name == nullptr || *name == '\0' || maxaddr == 0 || maxaddr > kMaxAddress) return nullptr;
  DirectOptions options;
  if (const void* given = H5Pget_driver_info(fapl))
    std::memcpy(&options, given, sizeof(DirectOptions));
  if (options.page_bytes == 0 || options.page_bytes % kAlignment != 0 ||
      options.resident_pages == 0)
    return nullptr;
  int mode = (flags & H5F_ACC_RDWR) ? O_RDWR : O_RDONLY;
  if (flags & H5F_ACC_TRUNC) mode |= O_TRUNC;
  if (flags & H5F_ACC_CREAT) mode |= O_CREAT;
  if (flags & H5F_ACC_EXCL) mode |= O_EXCL;
  int fd = ::open(name, mode | O_CLOEXEC, 0666);
  if (fd < 0) return nullptr;
  if (options.direct &&
      !(local_disk(fd) && ::fcntl(fd, F_SETFL, ::fcntl(fd, F_GETFL) | O_DIRECT) == 0))
    options.direct = false;
  struct stat st;
  if (::fstat(fd, &st) != 0) {
    ::close(fd);
    return nullptr;
  }
  auto* f = new DirectFile();
  std::memset(&f->pub, 0, sizeof(f->pub));
  f->fd = fd;
  f->options = options;
  f->device = st.st_dev;
  f->inode = st.st_ino;
  f->eof = haddr_t(st.st_size);
  // An existing file's pages are on the file (only reached when a file is opened, not created).
  const std::uint64_t existing =
      (std::uint64_t(st.st_size) + options.page_bytes - 1) / options.page_bytes;
  f->on_file.assign(existing, true);
  return &f->pub;
}

herr_t close_file(H5FD_t* file) {
  DirectFile* f = file_of(file);
  bool ok = true;
  if (f->pub.access_flags & H5F_ACC_RDWR) {
    ok = flush_pages(f);
    ok = ok && ::ftruncate(f->fd, off_t(f->eof)) == 0;
  }
  ok = ::close(f->fd) == 0 && ok;
  delete f;
  return ok ? 0 : -1;
}

int compare(const H5FD_t* a, const H5FD_t* b) {
  const DirectFile* x = file_of(a);
  const DirectFile* y = file_of(b);
  if (x->device != y->device) return x->device < y->device ? -1 : 1;
  if (x->inode != y->inode) return x->inode < y->inode ? -1 : 1;
  return 0;
}

// The default driver's features, so that HDF5 lays the file out as it does for that driver.
herr_t query(const H5FD_t*, unsigned long* flags) {
  if (flags != nullptr) {
    *flags = H5FD_FEAT_AGGREGATE_METADATA | H5FD_FEAT_ACCUMULATE_METADATA | H5FD_FEAT_DATA_SIEVE |
             H5FD_FEAT_AGGREGATE_SMALLDATA | H5FD_FEAT_DEFAULT_VFD_COMPATIBLE;
  }
  return 0;
}

haddr_t get_eoa(const H5FD_t* file, H5FD_mem_t) {
  return file_of(file)->eoa;
}

herr_t set_eoa(H5FD_t* file, H5FD_mem_t, haddr_t addr) {
  if (addr > kMaxAddress) return -1;
  file_of(file)->eoa = addr;
  return 0;
}

haddr_t get_eof(const H5FD_t* file, H5FD_mem_t) {
  return file_of(file)->eof;
}

herr_t get_handle(H5FD_t* file, hid_t, void** handle) {
  if (handle == nullptr) return -1;
  *handle = &file_of(file)->fd;
  return 0;
}

herr_t read_range(H5FD_t* file, H5FD_mem_t, hid_t, haddr_t addr, size_t size, void* buffer) {
  DirectFile* f = file_of(file);
  if (addr > kMaxAddress || size > kMaxAddress - addr || addr + size > f->eoa) return -1;
  auto* out = static_cast<unsigned char*>(buffer);
  // Bytes at or past the end of file read as zeros without touching a page.
  const std::size_t stored =
      addr >= f->eof ? 0 : std::size_t(std::min<haddr_t>(size, f->eof - addr));
  std::memset(out + stored, 0, size - stored);
  const bool ok =
      for_pages(f, addr, stored, [&](Page& p, std::size_t in, std::size_t at, std::size_t n) {
        std::memcpy(out + at, p.data.get() + in, n);
      });
  return ok ? 0 : -1;
}

herr_t write_range(H5FD_t* file, H5FD_mem_t, hid_t, haddr_t addr, size_t size, const void* buffer) {
  DirectFile* f = file_of(file);
  if (addr > kMaxAddress || size > kMaxAddress - addr || addr + size > f->eoa) return -1;
  const auto* in = static_cast<const unsigned char*>(buffer);
  const bool ok =
      for_pages(f, addr, size, [&](Page& p, std::size_t within, std::size_t at, std::size_t n) {
        std::memcpy(p.data.get() + within, in + at, n);
        p.dirty = true;
      });
  if (!ok) return -1;
  f->eof = std::max<haddr_t>(f->eof, addr + size);
  return 0;
}

herr_t flush(H5FD_t* file, hid_t, hbool_t) {
  return flush_pages(file_of(file)) ? 0 : -1;
}

// As the default driver: the end of file becomes the end of allocated space. Bytes cut off are
// zeroed here (the file itself is cut on close), so that a later extension reads zeros again.
herr_t truncate(H5FD_t* file, hid_t, hbool_t) {
  DirectFile* f = file_of(file);
  if (f->eoa < f->eof && !zero_range(f, f->eoa, f->eof)) return -1;
  f->eof = f->eoa;
  return 0;
}

H5FD_class_t make_class() {
  H5FD_class_t c;
  std::memset(&c, 0, sizeof(c));
  c.name = "hearthray_direct";
  c.maxaddr = kMaxAddress;
  c.fc_degree = H5F_CLOSE_WEAK;
  c.fapl_size = sizeof(DirectOptions);
  c.fapl_get = get_options;
  c.fapl_copy = copy_options;
  c.fapl_free = free_options;
  c.open = open_file;
  c.close = close_file;
  c.cmp = compare;
  c.query = query;
  c.get_eoa = get_eoa;
  c.set_eoa = set_eoa;
  c.get_eof = get_eof;
  c.get_handle = get_handle;
  c.read = read_range;
  c.write = write_range;
  c.flush = flush;
  c.truncate = truncate;
  const H5FD_mem_t map[H5FD_MEM_NTYPES] = H5FD_FLMAP_DICHOTOMY;
  std::copy(map, map + H5FD_MEM_NTYPES, c.fl_map);
  return c;
}

}  // namespace

herr_t use_direct_driver(hid_t fapl, const DirectOptions& options) {
  static const H5FD_class_t driver_class = make_class();
  static hid_t driver = -1;
  static std::once_flag registered;
  std::call_once(registered, [] { driver = H5FDregister(&driver_class); });
  if (driver < 0) return -1;
  return H5Pset_driver(fapl, driver, &options);
}

}  // namespace hearthray::hdf5
