#include "outputs/hdf5_file.hpp"

#include <tbb/blocked_range.h>
#include <tbb/concurrent_queue.h>
#include <tbb/enumerable_thread_specific.h>
#include <tbb/parallel_for.h>
#include <tbb/parallel_pipeline.h>
#include <tbb/task_arena.h>

#include <algorithm>
#include <cstring>
#include <memory>
#include <stdexcept>

#include "hearthray/error.hpp"
#include "outputs/hdf5_deflate.hpp"

namespace hearthray::hdf5 {

namespace {

// Rows per chunk of a compressed dataset: 64 Ki rows (512 KiB of doubles) balances the
// deflate ratio against the memory a reader needs for one chunk.
constexpr std::uint64_t kChunkRows = 1 << 16;
// Chunks compressed together (in parallel) before they are written: 16 chunks of doubles are
// 8 MiB held at a time per dataset.
constexpr std::uint64_t kBatchChunks = 16;
// The deflate level declared with the filter. HDF5 passes it only to its own compressor, which
// never runs here (hearthray compresses the chunks itself, hdf5_deflate.cpp); readers inflate
// any deflate stream alike.
constexpr unsigned kDeflateLevel = 1;

// Object creation properties without access and modification times: HDF5 records them by
// default, and they would make two runs of the same matrix differ.
Handle untimed(const File& file, hid_t property_class) {
  Handle list(file.check_id(H5Pcreate(property_class), "property list"), H5Pclose);
  file.check(H5Pset_obj_track_times(list.get(), false), "property list");
  return list;
}

Handle utf8_string_type(const File& file) {
  Handle type(file.check_id(H5Tcopy(H5T_C_S1), "string type"), H5Tclose);
  file.check(H5Tset_size(type.get(), H5T_VARIABLE), "string type");
  file.check(H5Tset_cset(type.get(), H5T_CSET_UTF8), "string type");
  return type;
}

}  // namespace

Handle& Handle::operator=(Handle&& other) noexcept {
  if (this != &other) {
    if (id_ >= 0 && close_) close_(id_);
    id_ = other.id_;
    close_ = other.close_;
    other.id_ = -1;
  }
  return *this;
}

Handle::~Handle() {
  if (id_ >= 0 && close_) close_(id_);
}

File::File(const std::string& path, std::string name) : name_(std::move(name)) {
  // Errors come back as status values and are reported by check(); no printing from HDF5.
  H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);
  file_ = Handle(
      check_id(H5Fcreate(path.c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, H5P_DEFAULT), "create the file"),
      H5Fclose);
  // The file's descriptor when HDF5 writes it with its POSIX driver (the default), for the
  // page-cache advice; any other driver is left alone.
  Handle access(H5Fget_access_plist(file_.get()), H5Pclose);
  void* handle = nullptr;
  if (access.get() >= 0 && H5Pget_driver(access.get()) == H5FD_SEC2 &&
      H5Fget_vfd_handle(file_.get(), access.get(), &handle) >= 0 && handle != nullptr)
    trim_ = PageCacheTrim(*static_cast<int*>(handle));
}

void File::wrote_chunk(std::size_t bytes) const {
  // The chunks' bytes so far are a lower bound of the file's end.
  chunk_bytes_ += bytes;
  trim_.written_up_to(chunk_bytes_);
}

void File::close() {
  const hid_t id = file_.get();
  check(H5Fflush(id, H5F_SCOPE_GLOBAL), "flush");
  file_ = Handle();  // closes; a failure there shows in the flush above
}

void File::check(herr_t status, const std::string& what) const {
  if (status < 0) throw InputError("writing '" + name_ + "' failed (HDF5: " + what + ")");
}

hid_t File::check_id(hid_t id, const std::string& what) const {
  if (id < 0) throw InputError("writing '" + name_ + "' failed (HDF5: " + what + ")");
  return id;
}

void File::group(const std::string& path) const {
  const Handle properties = untimed(*this, H5P_GROUP_CREATE);
  Handle g(
      check_id(H5Gcreate2(file_.get(), path.c_str(), H5P_DEFAULT, properties.get(), H5P_DEFAULT),
               "group " + path),
      H5Gclose);
}

namespace {

// Writes one attribute of `type` and `count` values (0: a scalar) on the object at `path`.
void write_attribute(const File& file, const std::string& path, const std::string& name, hid_t type,
                     const void* value, hsize_t count) {
  Handle object(file.check_id(H5Oopen(file.get(), path.c_str(), H5P_DEFAULT), "open " + path),
                H5Oclose);
  Handle space(
      file.check_id(count == 0 ? H5Screate(H5S_SCALAR) : H5Screate_simple(1, &count, nullptr),
                    "attribute space"),
      H5Sclose);
  Handle attribute(file.check_id(H5Acreate2(object.get(), name.c_str(), type, space.get(),
                                            H5P_DEFAULT, H5P_DEFAULT),
                                 "attribute " + name),
                   H5Aclose);
  file.check(H5Awrite(attribute.get(), type, value), "attribute " + name);
}

}  // namespace

void File::attribute(const std::string& path, const std::string& name,
                     const std::string& value) const {
  const Handle type = utf8_string_type(*this);
  const char* text = value.c_str();
  write_attribute(*this, path, name, type.get(), &text, 0);
}

void File::attribute(const std::string& path, const std::string& name, double value) const {
  write_attribute(*this, path, name, H5T_NATIVE_DOUBLE, &value, 0);
}

void File::attribute(const std::string& path, const std::string& name, std::int64_t value) const {
  write_attribute(*this, path, name, H5T_NATIVE_INT64, &value, 0);
}

void File::attribute(const std::string& path, const std::string& name,
                     const std::vector<std::int64_t>& values) const {
  write_attribute(*this, path, name, H5T_NATIVE_INT64, values.data(), values.size());
}

void File::strings(const std::string& path, const std::vector<std::string>& values) const {
  const Handle type = utf8_string_type(*this);
  std::vector<const char*> pointers;
  pointers.reserve(values.size());
  for (const std::string& v : values) pointers.push_back(v.c_str());
  Dataset dataset(*this, path, type.get(), values.size(), 1, false);
  dataset.append(pointers.data(), values.size(), type.get());
  dataset.finish();
}

void File::doubles(const std::string& path, const std::vector<double>& values, int columns) const {
  Dataset d(*this, path, H5T_IEEE_F64LE, values.size() / std::size_t(columns), columns);
  d.append(values.data(), values.size() / std::size_t(columns), H5T_NATIVE_DOUBLE);
  d.finish();
}

void File::int64s(const std::string& path, const std::vector<std::int64_t>& values,
                  int columns) const {
  Dataset d(*this, path, H5T_STD_I64LE, values.size() / std::size_t(columns), columns);
  d.append(values.data(), values.size() / std::size_t(columns), H5T_NATIVE_INT64);
  d.finish();
}

void File::int32s(const std::string& path, const std::vector<std::int32_t>& values) const {
  Dataset d(*this, path, H5T_STD_I32LE, values.size());
  d.append(values.data(), values.size(), H5T_NATIVE_INT32);
  d.finish();
}

void File::uint64s(const std::string& path, const std::vector<std::uint64_t>& values) const {
  Dataset d(*this, path, H5T_STD_U64LE, values.size());
  d.append(values.data(), values.size(), H5T_NATIVE_UINT64);
  d.finish();
}

void File::int8s(const std::string& path, const std::vector<std::int8_t>& values) const {
  Dataset d(*this, path, H5T_STD_I8LE, values.size());
  d.append(values.data(), values.size(), H5T_NATIVE_INT8);
  d.finish();
}

Dataset::Dataset(const File& file, const std::string& path, hid_t type, std::uint64_t rows,
                 int columns, bool compress)
    : file_(&file), path_(path), rows_(rows), columns_(columns) {
  const hsize_t dims[2] = {rows, hsize_t(columns)};
  Handle space(
      file.check_id(H5Screate_simple(columns == 1 ? 1 : 2, dims, nullptr), "space of " + path),
      H5Sclose);
  const Handle properties = untimed(file, H5P_DATASET_CREATE);
  type_ = type;
  if (compress && rows > 0) {
    // Chunked, byte-shuffled (the high bytes of similar numbers sit together), deflated.
    chunk_rows_ = std::min<hsize_t>(rows, kChunkRows);
    value_bytes_ = H5Tget_size(type);
    if (value_bytes_ == 0 || H5Tis_variable_str(type) > 0)
      throw std::logic_error("HDF5 dataset " + path + ": only fixed-size values are compressed");
    const hsize_t chunk[2] = {chunk_rows_, hsize_t(columns)};
    file.check(H5Pset_chunk(properties.get(), columns == 1 ? 1 : 2, chunk), "chunk " + path);
    file.check(H5Pset_shuffle(properties.get()), "shuffle " + path);
    file.check(H5Pset_deflate(properties.get(), kDeflateLevel), "deflate " + path);
  }
  dataset_ = Handle(file.check_id(H5Dcreate2(file.get(), path.c_str(), type, space.get(),
                                             H5P_DEFAULT, properties.get(), H5P_DEFAULT),
                                  "dataset " + path),
                    H5Dclose);
}

void Dataset::append(const void* values, std::uint64_t count, hid_t memory_type) {
  if (count == 0) return;
  if (written_ + count > rows_)
    throw std::logic_error("HDF5 dataset " + path_ + ": more rows appended than declared");
  if (chunk_rows_ > 0) {
    // Converted in place at the end of pending_, in a slot wide enough for either type.
    const std::size_t values_in = std::size_t(count) * std::size_t(columns_);
    const std::size_t memory_bytes = H5Tget_size(memory_type);
    const std::size_t start = pending_.size();
    pending_.resize(start + values_in * std::max(memory_bytes, value_bytes_));
    std::memcpy(pending_.data() + start, values, values_in * memory_bytes);
    if (H5Tequal(memory_type, type_) <= 0)
      file_->check(
          H5Tconvert(memory_type, type_, values_in, pending_.data() + start, nullptr, H5P_DEFAULT),
          "convert values of " + path_);
    pending_.resize(start + values_in * value_bytes_);
    written_ += count;
    if (pending_.size() >= kBatchChunks * chunk_rows_ * std::size_t(columns_) * value_bytes_)
      write_chunks(false);
    return;
  }
  const hsize_t start[2] = {written_, 0}, size[2] = {count, hsize_t(columns_)};
  const int rank = columns_ == 1 ? 1 : 2;
  Handle file_space(file_->check_id(H5Dget_space(dataset_.get()), "space of " + path_), H5Sclose);
  file_->check(H5Sselect_hyperslab(file_space.get(), H5S_SELECT_SET, start, nullptr, size, nullptr),
               "select in " + path_);
  Handle memory_space(file_->check_id(H5Screate_simple(rank, size, nullptr), "memory space"),
                      H5Sclose);
  file_->check(H5Dwrite(dataset_.get(), memory_type, memory_space.get(), file_space.get(),
                        H5P_DEFAULT, values),
               "write " + path_);
  written_ += count;
}

void Dataset::finish() {
  if (written_ != rows_)
    throw std::logic_error("HDF5 dataset " + path_ + ": " + std::to_string(written_) + " of " +
                           std::to_string(rows_) + " rows appended");
  if (chunk_rows_ > 0) write_chunks(true);
}

// Compresses the whole chunks held (with `last`, also the partial one, padded) in parallel,
// then writes them in order.
void Dataset::write_chunks(bool last) {
  const std::size_t chunk_values = std::size_t(chunk_rows_) * std::size_t(columns_);
  const std::size_t chunk_bytes = chunk_values * value_bytes_;
  std::size_t chunks = pending_.size() / chunk_bytes;
  if (last && pending_.size() % chunk_bytes != 0) {
    pending_.resize((chunks + 1) * chunk_bytes, 0);
    ++chunks;
  }
  if (chunks == 0) return;
  std::vector<std::vector<unsigned char>> packed(chunks);
  std::vector<std::size_t> sizes(chunks, 0);
  tbb::enumerable_thread_specific<ChunkDeflater> deflaters;
  tbb::parallel_for(tbb::blocked_range<std::size_t>(0, chunks, 1),
                    [&](const tbb::blocked_range<std::size_t>& range) {
                      ChunkDeflater& deflater = deflaters.local();
                      for (std::size_t c = range.begin(); c != range.end(); ++c)
                        sizes[c] = deflater.compress(pending_.data() + c * chunk_bytes,
                                                     chunk_values, value_bytes_, &packed[c]);
                    });
  for (std::size_t c = 0; c < chunks; ++c) write_chunk(packed[c].data(), sizes[c]);
  pending_.erase(pending_.begin(), pending_.begin() + std::ptrdiff_t(chunks * chunk_bytes));
}

void Dataset::write_chunk(const unsigned char* packed, std::size_t size) {
  if (size == 0) file_->check(-1, "deflate a chunk of " + path_);
  const hsize_t offset[2] = {next_chunk_ * chunk_rows_, 0};
  file_->check(H5Dwrite_chunk(dataset_.get(), H5P_DEFAULT, 0, offset, size, packed),
               "write a chunk of " + path_);
  file_->wrote_chunk(size);
  ++next_chunk_;
}

void Dataset::write_rows(const Fill& fill) {
  if (rows_ == 0) return;
  if (written_ != 0 || chunk_rows_ == 0)
    throw std::logic_error("HDF5 dataset " + path_ +
                           ": write_rows needs a compressed dataset with no rows appended");
  const std::uint64_t chunks = (rows_ + chunk_rows_ - 1) / chunk_rows_;
  const std::size_t chunk_values = std::size_t(chunk_rows_) * std::size_t(columns_);
  const std::size_t chunk_bytes = chunk_values * value_bytes_;
  // A chunk on its way; chunks are used again once written, so their buffers are allocated
  // (and their pages touched) once per write rather than once per chunk.
  struct Chunk {
    std::uint64_t index = 0;
    std::vector<unsigned char> values, packed;
    std::size_t size = 0;  // of the stream at the start of `packed`; 0: deflate failed
  };
  std::vector<std::unique_ptr<Chunk>> chunk_store;  // touched by the serial source only
  tbb::concurrent_queue<Chunk*> written;
  tbb::enumerable_thread_specific<ChunkDeflater> deflaters;
  std::uint64_t next = 0;
  auto source = [&](tbb::flow_control& control) -> Chunk* {
    if (next == chunks) {
      control.stop();
      return nullptr;
    }
    Chunk* chunk = nullptr;
    if (!written.try_pop(chunk)) {
      chunk_store.push_back(std::make_unique<Chunk>());
      chunk = chunk_store.back().get();
      chunk->values.resize(chunk_bytes);
    }
    chunk->index = next++;
    return chunk;
  };
  auto compress = [&](Chunk* chunk) {
    const std::uint64_t first = chunk->index * chunk_rows_;
    const std::uint64_t rows = std::min(chunk_rows_, rows_ - first);
    fill(first, rows, chunk->values.data());
    const std::size_t filled = std::size_t(rows) * std::size_t(columns_) * value_bytes_;
    // The last chunk's padding: zeros, HDF5's fill value.
    std::memset(chunk->values.data() + filled, 0, chunk_bytes - filled);
    chunk->size = deflaters.local().compress(chunk->values.data(), chunk_values, value_bytes_,
                                             &chunk->packed);
    return chunk;
  };
  auto write = [&](Chunk* chunk) {
    write_chunk(chunk->packed.data(), chunk->size);
    written.push(chunk);
  };
  // Chunks are made and compressed in parallel and written in order as they come, so the
  // writing overlaps the compressing; a few chunks in flight per thread.
  const std::size_t in_flight = 2 * std::size_t(tbb::this_task_arena::max_concurrency()) + 2;
  tbb::parallel_pipeline(
      in_flight, tbb::make_filter<void, Chunk*>(tbb::filter_mode::serial_in_order, source) &
                     tbb::make_filter<Chunk*, Chunk*>(tbb::filter_mode::parallel, compress) &
                     tbb::make_filter<Chunk*, void>(tbb::filter_mode::serial_in_order, write));
  written_ = rows_;
}

}  // namespace hearthray::hdf5
