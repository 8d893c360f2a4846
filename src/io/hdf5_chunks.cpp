#include "io/hdf5_chunks.hpp"

#include <hdf5.h>
#include <libdeflate.h>

#include <algorithm>
#include <cstring>
#include <new>

#include "isohypse/base/error.hpp"

namespace isohypse {

namespace detail {

struct ChunkReader::Handles {
  hid_t file = -1, dset = -1;
  ~Handles() {
    H5E_BEGIN_TRY {
      if (dset >= 0) H5Dclose(dset);
      if (file >= 0) H5Fclose(file);
    }
    H5E_END_TRY;
  }
};

ChunkReader::~ChunkReader() = default;

std::unique_ptr<ChunkReader> ChunkReader::open(const std::string& path, const std::string& variable,
                                               const std::vector<std::size_t>& dims) {
  std::unique_ptr<ChunkReader> r(new ChunkReader());
  r->h_ = std::make_unique<Handles>();
  Handles& h = *r->h_;
  bool ok = false;
  H5E_BEGIN_TRY {
    // NetCDF-4 only (netCDF-C has the file open too: HDF5 shares it read-only).
    if (H5Fis_hdf5(path.c_str()) > 0) h.file = H5Fopen(path.c_str(), H5F_ACC_RDONLY, H5P_DEFAULT);
    if (h.file >= 0) {
      h.dset = H5Dopen2(h.file, variable.c_str(), H5P_DEFAULT);
      if (h.dset < 0) h.dset = H5Dopen2(h.file, ("_nc4_non_coord_" + variable).c_str(), H5P_DEFAULT);
    }
    if (h.dset >= 0) {
      ok = true;
      // The same shape as netCDF-C reports.
      hid_t space = H5Dget_space(h.dset);
      const int rank = H5Sget_simple_extent_ndims(space);
      std::vector<hsize_t> ext(rank > 0 ? static_cast<std::size_t>(rank) : 0);
      if (rank > 0) H5Sget_simple_extent_dims(space, ext.data(), nullptr);
      H5Sclose(space);
      ok = rank == static_cast<int>(dims.size());
      for (std::size_t i = 0; ok && i < dims.size(); ++i) ok = ext[i] == dims[i];
      // Chunked, with deflate (and perhaps shuffle) only.
      hid_t dcpl = H5Dget_create_plist(h.dset);
      ok = ok && H5Pget_layout(dcpl) == H5D_CHUNKED;
      StoredChunks::Layout& lay = r->layout_;
      if (ok) {
        std::vector<hsize_t> c(dims.size());
        ok = H5Pget_chunk(dcpl, static_cast<int>(c.size()), c.data()) == static_cast<int>(c.size());
        for (hsize_t x : c) lay.chunk.push_back(static_cast<std::size_t>(x));
      }
      bool deflated = false;
      const int nf = ok ? H5Pget_nfilters(dcpl) : 0;
      for (int i = 0; ok && i < nf; ++i) {
        unsigned flags = 0, cd[8];
        std::size_t ncd = 8;
        char name[64];
        const H5Z_filter_t id = H5Pget_filter2(dcpl, static_cast<unsigned>(i), &flags, &ncd, cd, sizeof name, name,
                                               nullptr);
        if (id == H5Z_FILTER_DEFLATE) {
          lay.filters.push_back(1);
          deflated = true;
        } else if (id == H5Z_FILTER_SHUFFLE) {
          lay.filters.push_back(2);
        } else {
          ok = false;  // fletcher32, szip, others: netCDF-C's path
        }
      }
      ok = ok && deflated;
      H5Pclose(dcpl);
      // Little-endian float32, float64 or int16 (this machine's own order).
      hid_t type = H5Dget_type(h.dset);
      if (ok && H5Tequal(type, H5T_IEEE_F32LE) > 0 && H5Tequal(type, H5T_NATIVE_FLOAT) > 0) {
        lay.type = 0;
        lay.type_size = 4;
      } else if (ok && H5Tequal(type, H5T_IEEE_F64LE) > 0 && H5Tequal(type, H5T_NATIVE_DOUBLE) > 0) {
        lay.type = 1;
        lay.type_size = 8;
      } else if (ok && H5Tequal(type, H5T_STD_I16LE) > 0 && H5Tequal(type, H5T_NATIVE_SHORT) > 0) {
        lay.type = 2;
        lay.type_size = 2;
      } else {
        ok = false;
      }
      H5Tclose(type);
    }
  }
  H5E_END_TRY;
  if (!ok) return nullptr;
  return r;
}

bool ChunkReader::read(const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
                       StoredChunks& out) const {
  const std::size_t rank = layout_.chunk.size();
  out.layout = layout_;
  out.start = start;
  out.count = count;
  out.chunks.clear();
  std::vector<std::size_t> first(rank), last(rank), at(rank);
  for (std::size_t d = 0; d < rank; ++d) {
    if (count[d] == 0) return true;
    first[d] = start[d] / layout_.chunk[d];
    last[d] = (start[d] + count[d] - 1) / layout_.chunk[d];
  }
  at = first;
  bool ok = true;
  H5E_BEGIN_TRY {
    while (ok) {
      StoredChunks::Chunk c;
      std::vector<hsize_t> offset(rank);
      for (std::size_t d = 0; d < rank; ++d) {
        c.offset.push_back(at[d] * layout_.chunk[d]);
        offset[d] = c.offset.back();
      }
      hsize_t nbytes = 0;
      ok = H5Dget_chunk_storage_size(h_->dset, offset.data(), &nbytes) >= 0 && nbytes > 0;
      if (ok) {
        c.bytes.resize(static_cast<std::size_t>(nbytes));
        uint32_t mask = 0;
        ok = H5Dread_chunk(h_->dset, H5P_DEFAULT, offset.data(), &mask, c.bytes.data()) >= 0;
        c.filter_mask = mask;
        out.chunks.push_back(std::move(c));
      }
      // Next chunk, the last dimension fastest.
      std::size_t d = rank;
      while (d-- > 0) {
        if (++at[d] <= last[d]) break;
        at[d] = first[d];
      }
      if (d == static_cast<std::size_t>(-1)) break;
    }
  }
  H5E_END_TRY;
  if (!ok) out.chunks.clear();
  return ok;
}

namespace {

// One decompressor per thread, kept for the thread's life (libdeflate's are
// reusable but not shareable between threads).
libdeflate_decompressor* decompressor() {
  struct Owned {
    libdeflate_decompressor* d = libdeflate_alloc_decompressor();
    ~Owned() { libdeflate_free_decompressor(d); }
  };
  thread_local Owned owned;
  if (!owned.d) throw std::bad_alloc();
  return owned.d;
}

}  // namespace

namespace {

// HDF5's shuffle filter undone: byte b of value v was stored at b * n + v.
// Local pointers and the common widths spelt out let the compiler keep the
// loop in registers and vectorise it.
void unshuffle(const unsigned char* __restrict in, std::size_t n, std::size_t width, unsigned char* __restrict out) {
  if (width == 2) {
    const unsigned char *b0 = in, *b1 = in + n;
    for (std::size_t v = 0; v < n; ++v) {
      out[2 * v] = b0[v];
      out[2 * v + 1] = b1[v];
    }
    return;
  }
  if (width == 4) {
    const unsigned char *b0 = in, *b1 = in + n, *b2 = in + 2 * n, *b3 = in + 3 * n;
    for (std::size_t v = 0; v < n; ++v) {
      out[4 * v] = b0[v];
      out[4 * v + 1] = b1[v];
      out[4 * v + 2] = b2[v];
      out[4 * v + 3] = b3[v];
    }
    return;
  }
  for (std::size_t b = 0; b < width; ++b)
    for (std::size_t v = 0; v < n; ++v) out[v * width + b] = in[b * n + v];
}

}  // namespace

void inflate_chunks(const StoredChunks& s, float* out, const std::string& path) {
  const StoredChunks::Layout& lay = s.layout;
  const std::size_t rank = lay.chunk.size();
  std::size_t chunk_values = 1;
  for (std::size_t c : lay.chunk) chunk_values *= c;
  const std::size_t chunk_bytes = chunk_values * lay.type_size;
  // A thread's buffers only grow: fresh zeroed pages per call cost more than the inflation.
  thread_local std::vector<unsigned char> work, other;
  if (work.size() < chunk_bytes) work.resize(chunk_bytes);
  if (other.size() < chunk_bytes) other.resize(chunk_bytes);
  // Strides of the output (row-major over count) and of a chunk.
  std::vector<std::size_t> out_stride(rank, 1), chunk_stride(rank, 1);
  for (std::size_t d = rank - 1; d-- > 0;) {
    out_stride[d] = out_stride[d + 1] * s.count[d + 1];
    chunk_stride[d] = chunk_stride[d + 1] * lay.chunk[d + 1];
  }
  for (const StoredChunks::Chunk& c : s.chunks) {
    // Undo the filters in reverse order of writing.
    const unsigned char* data = c.bytes.data();
    std::size_t size = c.bytes.size();
    for (std::size_t i = lay.filters.size(); i-- > 0;) {
      if (c.filter_mask & (1u << i)) continue;  // not applied to this chunk
      if (lay.filters[i] == 1) {
        std::size_t got = 0;
        if (libdeflate_zlib_decompress(decompressor(), data, size, work.data(), chunk_bytes, &got) !=
                LIBDEFLATE_SUCCESS ||
            got != chunk_bytes)
          throw DataError(path + ": a compressed chunk does not inflate to its size (the file is damaged)");
      } else {  // shuffle: byte b of value v was stored at b * n + v
        unshuffle(data, size / lay.type_size, lay.type_size, other.data());
        std::swap(work, other);
      }
      data = work.data();
      size = chunk_bytes;
    }
    if (size != chunk_bytes)
      throw DataError(path + ": a stored chunk has " + std::to_string(size) + " bytes, " + std::to_string(chunk_bytes) +
                      " expected");
    // The part of the chunk inside the hyperslab, a run along the last dimension at a time.
    std::vector<std::size_t> lo(rank), hi(rank);
    bool empty = false;
    for (std::size_t d = 0; d < rank; ++d) {
      lo[d] = std::max(c.offset[d], s.start[d]);
      hi[d] = std::min(c.offset[d] + lay.chunk[d], s.start[d] + s.count[d]);
      empty = empty || lo[d] >= hi[d];
    }
    if (empty) continue;
    std::vector<std::size_t> at = lo;
    const std::size_t run = hi[rank - 1] - lo[rank - 1];
    for (;;) {
      std::size_t src = 0, dst = 0;
      for (std::size_t d = 0; d < rank; ++d) {
        src += (at[d] - c.offset[d]) * chunk_stride[d];
        dst += (at[d] - s.start[d]) * out_stride[d];
      }
      float* o = out + dst;
      if (lay.type == 0) {
        std::memcpy(o, data + src * 4, run * 4);
      } else if (lay.type == 1) {
        for (std::size_t j = 0; j < run; ++j) {
          double v;
          std::memcpy(&v, data + (src + j) * 8, 8);
          o[j] = static_cast<float>(v);
        }
      } else {
        for (std::size_t j = 0; j < run; ++j) {
          short v;
          std::memcpy(&v, data + (src + j) * 2, 2);
          o[j] = static_cast<float>(v);
        }
      }
      std::size_t d = rank - 1;  // next run: the leading dimensions, last fastest
      while (d-- > 0) {
        if (++at[d] < hi[d]) break;
        at[d] = lo[d];
      }
      if (d == static_cast<std::size_t>(-1)) break;
    }
  }
}

}  // namespace detail

}  // namespace isohypse
