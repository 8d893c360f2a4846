// Decoding the values of one indexed GRIB message (grib_index.hpp) through
// ecCodes, which decodes every packing it knows (simple, complex, JPEG 2000,
// CCSDS, PNG, IEEE, ...).
//
// Output layout: float, metres (the message's values times to_metres),
// LATITUDE-MAJOR in the index's storage order: out[j * ni + i] is the value
// at grid.latitudes[j], grid.longitudes[i]. A message stored column by column
// (jPointsAreConsecutive) is transposed to this layout. Points the message's
// bitmap marks missing are NaN.
//
// Errors: DataError naming the file and byte offset when the bytes there are
// no longer the message indexed (file changed or cut since the scan), when
// ecCodes cannot decode them, or when the value count is not ni x nj.
//
// Thread safety: decode_grib_field may run on several threads at once, each
// with its own GribDecodeScratch (DEVELOPERS.md, "Threads, memory, C
// libraries"): it reads the message's bytes with its own file stream and
// decodes them with a handle of its own; ecCodes (Debian's build, with
// OpenMP locks) serialises its shared context internally.
#pragma once

#include <cstdint>
#include <vector>

#include "isohypse/io/grib_index.hpp"

namespace isohypse {

// Buffers one thread reuses from message to message (the message bytes and
// ecCodes' double values), so that a loop over messages allocates once.
struct GribDecodeScratch {
  std::vector<unsigned char> bytes;
  std::vector<double> values;
};

// Decodes `message` on `grid` into `out` (resized to grid.n_points()).
void decode_grib_field(const GribMessage& message, const GribGrid& grid, std::vector<float>& out,
                       GribDecodeScratch& scratch);
std::vector<float> decode_grib_field(const GribMessage& message, const GribGrid& grid);

}  // namespace isohypse
