// A thin RAII layer over the HDF5 C API for the matrix file (hdf5_output.cpp): handles closed
// on scope exit, every call checked (a failed call throws InputError naming the file), no
// object timestamps (the same matrix gives the same bytes), compressed 1-D and N x 3 datasets
// written block by block so that a large matrix is never copied whole.
#pragma once

#include <hdf5.h>

#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "core/page_cache.hpp"

namespace hearthray::hdf5 {

// An HDF5 identifier closed by its close function when the object goes.
class Handle {
 public:
  Handle() = default;
  Handle(hid_t id, herr_t (*close)(hid_t)) : id_(id), close_(close) {}
  Handle(Handle&& other) noexcept : id_(other.id_), close_(other.close_) { other.id_ = -1; }
  Handle& operator=(Handle&& other) noexcept;
  Handle(const Handle&) = delete;
  Handle& operator=(const Handle&) = delete;
  ~Handle();
  hid_t get() const { return id_; }

 private:
  hid_t id_ = -1;
  herr_t (*close_)(hid_t) = nullptr;
};

class File;

// A dataset of `rows` x `columns` (columns 1: a vector) filled in row order by append(), then
// finish(), or all at once by write_rows(). A compressed dataset is cut into chunks that are
// shuffled and deflated here (hdf5_deflate.hpp), in parallel on the calling task arena, and
// written as they are (H5Dwrite_chunk) under the standard shuffle and deflate filters, so any
// HDF5 reader inflates them without a plugin; each chunk's bytes depend on its values alone and
// the chunks are written in order, so any thread count writes the same file.
class Dataset {
 public:
  Dataset(const File& file, const std::string& path, hid_t type, std::uint64_t rows,
          int columns = 1, bool compress = true);
  // Appends `count` rows (count x columns values) of `memory_type`, converted to the
  // dataset's type as HDF5 converts them.
  void append(const void* values, std::uint64_t count, hid_t memory_type);
  // Writes the rows still held (the last chunk padded with zeros, HDF5's fill value, as HDF5
  // pads it); throws std::logic_error when fewer rows were appended than declared.
  void finish();
  // Makes rows [first, first + rows) of one chunk: rows x columns values in the file's type
  // and byte order at `out`. Called in parallel for different chunks.
  using Fill = std::function<void(std::uint64_t first, std::uint64_t rows, unsigned char* out)>;
  // Writes every row of a compressed dataset with none appended, chunk by chunk from `fill`:
  // chunks are made and compressed in parallel while the ones before are written.
  void write_rows(const Fill& fill);
  std::uint64_t written() const { return written_; }
  hid_t get() const { return dataset_.get(); }

 private:
  void write_chunks(bool last);
  // The next chunk, compressed (`size` 0: its compression failed).
  void write_chunk(const unsigned char* packed, std::size_t size);

  const File* file_;
  std::string path_;
  Handle dataset_;
  hid_t type_ = -1;  // the file type (owned by the caller)
  std::uint64_t rows_ = 0, written_ = 0;
  int columns_ = 1;
  // Compressed datasets: rows per chunk, bytes of one value in the file, the next chunk's
  // index, and the converted values of the rows appended but not yet written.
  std::uint64_t chunk_rows_ = 0, next_chunk_ = 0;
  std::size_t value_bytes_ = 0;
  std::vector<unsigned char> pending_;
};

class File {
 public:
  // Creates (truncates) `path`; `name` is the file named in messages (the final path when
  // `path` is a temporary one).
  File(const std::string& path, std::string name);
  void close();  // flushes and closes; throws when that fails
  hid_t get() const { return file_.get(); }
  // Throws InputError "writing NAME failed: what" when `status` is negative.
  void check(herr_t status, const std::string& what) const;
  hid_t check_id(hid_t id, const std::string& what) const;

  void group(const std::string& path) const;
  // Attributes on the object at `path` ("/" for the file).
  void attribute(const std::string& path, const std::string& name, const std::string& value) const;
  void attribute(const std::string& path, const std::string& name, double value) const;
  void attribute(const std::string& path, const std::string& name, std::int64_t value) const;
  void attribute(const std::string& path, const std::string& name,
                 const std::vector<std::int64_t>& values) const;
  // Whole vectors as datasets.
  void strings(const std::string& path, const std::vector<std::string>& values) const;
  void doubles(const std::string& path, const std::vector<double>& values, int columns = 1) const;
  void int64s(const std::string& path, const std::vector<std::int64_t>& values,
              int columns = 1) const;
  void int32s(const std::string& path, const std::vector<std::int32_t>& values) const;
  void uint64s(const std::string& path, const std::vector<std::uint64_t>& values) const;
  void int8s(const std::string& path, const std::vector<std::int8_t>& values) const;

  const std::string& name() const { return name_; }
  // A dataset's chunk of `bytes` was written (at the file's end, where HDF5 puts new chunks):
  // the pages of what lies well behind are let go from the page cache (core/page_cache.hpp).
  void wrote_chunk(std::size_t bytes) const;

 private:
  std::string name_;
  Handle file_;
  // Chunks are written one at a time (Dataset's serial stage), so these need no lock.
  mutable PageCacheTrim trim_;
  mutable std::uint64_t chunk_bytes_ = 0;
};

}  // namespace hearthray::hdf5
