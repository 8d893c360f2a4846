// Internal: a compressed NetCDF-4 variable's chunks read directly with HDF5
// (H5Dread_chunk), so that inflating them can run on any thread: netCDF-C
// inflates inside its own calls, one thread at a time. Used only where it is
// exact: a chunked variable whose filters are deflate and shuffle alone, of
// little-endian float32, float64 or int16, in the root group, every chunk of
// the hyperslab written. Anything else keeps the netCDF-C path.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "isohypse/io/dataset.hpp"

namespace isohypse::detail {

class ChunkReader {
public:
  // nullptr when the variable is not compressed or not one this reads exactly.
  // `dims` are the variable's dimension lengths as netCDF-C reports them.
  static std::unique_ptr<ChunkReader> open(const std::string& path, const std::string& variable,
                                           const std::vector<std::size_t>& dims);
  ~ChunkReader();
  ChunkReader(const ChunkReader&) = delete;
  ChunkReader& operator=(const ChunkReader&) = delete;

  // The stored chunks covering the hyperslab [start, start + count), into
  // `out` (HDF5: one thread at a time). False, with `out` cleared, when a
  // chunk was never written (netCDF-C then supplies the fill value).
  bool read(const std::vector<std::size_t>& start, const std::vector<std::size_t>& count, StoredChunks& out) const;

private:
  ChunkReader() = default;
  struct Handles;
  std::unique_ptr<Handles> h_;
  StoredChunks::Layout layout_;
};

// The hyperslab's values as floats (the stored numbers, not yet unpacked),
// row-major over `count` like nc_get_vara_float, into out (product of count
// values). Thread-safe (zlib only). Throws DataError naming `path` when a
// chunk does not inflate to its size.
void inflate_chunks(const StoredChunks& stored, float* out, const std::string& path);

}  // namespace isohypse::detail
