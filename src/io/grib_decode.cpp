#include "isohypse/io/grib_decode.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <fstream>
#include <limits>

#include "io/grib_handle.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

// The message's bytes, read with a stream of this call's own (threads never
// share a FILE*), and checked to be a whole GRIB message still: the file may
// have changed since it was indexed.
void read_message_bytes(const GribMessage& m, std::vector<unsigned char>& bytes) {
  std::ifstream in(m.path, std::ios::binary);
  if (!in) throw InputError(m.path + ": cannot open for reading");
  bytes.resize(static_cast<std::size_t>(m.length));
  in.seekg(static_cast<std::streamoff>(m.offset));
  in.read(reinterpret_cast<char*>(bytes.data()), static_cast<std::streamsize>(bytes.size()));
  const bool whole = in.gcount() == static_cast<std::streamsize>(bytes.size()) && bytes.size() >= 8 &&
                     std::memcmp(bytes.data(), "GRIB", 4) == 0 &&
                     std::memcmp(bytes.data() + bytes.size() - 4, "7777", 4) == 0;
  if (!whole)
    throw DataError(m.where() + ": the " + std::to_string(m.length) +
                    " bytes indexed there are no longer a whole GRIB message (the file changed or was cut "
                    "since it was scanned)");
}

// Points the bitmap marks missing become NaN. ecCodes writes `missingValue`
// there; the bitmap itself (1 present, 0 missing; WMO FM 92 section 6 /
// GRIB1 section 3) decides, so that a real value equal to missingValue stays.
void apply_bitmap(const grib::Handle& h, std::vector<double>& values) {
  if (!h.defined("bitmapPresent") || h.get_long("bitmapPresent") == 0) return;
  const std::vector<long> bitmap = h.get_longs("bitmap");
  if (bitmap.size() != values.size())
    throw DataError(h.where() + ": bitmap of " + std::to_string(bitmap.size()) + " points for " +
                    std::to_string(values.size()) + " values");
  for (std::size_t p = 0; p < values.size(); ++p)
    if (bitmap[p] == 0) values[p] = std::numeric_limits<double>::quiet_NaN();
}

// Storage order to latitude-major: out[j * ni + i]. Stored row by row this
// is a copy; column by column (jPointsAreConsecutive) value k = i * nj + j.
void to_latitude_major(const std::vector<double>& values, const GribGrid& g, double scale,
                       std::vector<float>& out) {
  out.resize(g.n_points());
  const std::size_t ni = static_cast<std::size_t>(g.ni), nj = static_cast<std::size_t>(g.nj);
  if (!g.j_points_consecutive) {
    for (std::size_t k = 0; k < values.size(); ++k) out[k] = static_cast<float>(values[k] * scale);
    return;
  }
  for (std::size_t i = 0; i < ni; ++i)
    for (std::size_t j = 0; j < nj; ++j) out[j * ni + i] = static_cast<float>(values[i * nj + j] * scale);
}

// Simple packing unpacked here (GribMessage::SimplePacking): the X are
// big-endian bit fields of `bits` bits, one after another; bits 0 is a
// constant field R / 10^D.
void unpack_simple(const GribMessage& m, const std::vector<unsigned char>& bytes, std::vector<double>& values) {
  const GribMessage::SimplePacking& p = *m.simple;
  const auto bits = static_cast<unsigned>(m.bits_per_value);
  const double two_e = std::ldexp(1.0, static_cast<int>(p.binary_scale));
  const double ten_d = std::pow(10.0, -static_cast<double>(p.decimal_scale));
  values.resize(static_cast<std::size_t>(p.values));
  const unsigned char* data = bytes.data() + p.data_offset;
  if (bits == 0) {
    std::fill(values.begin(), values.end(), p.reference * ten_d);
    return;
  }
  const std::uint64_t mask = (std::uint64_t{1} << bits) - 1;
  std::uint64_t acc = 0;
  unsigned have = 0;
  for (double& v : values) {
    while (have < bits) {
      acc = (acc << 8) | *data++;
      have += 8;
    }
    const std::uint64_t x = (acc >> (have - bits)) & mask;
    have -= bits;
    acc &= (std::uint64_t{1} << have) - 1;
    v = (p.reference + static_cast<double>(x) * two_e) * ten_d;
  }
}

}  // namespace

void decode_grib_field(const GribMessage& message, const GribGrid& grid, std::vector<float>& out,
                       GribDecodeScratch& scratch) {
  read_message_bytes(message, scratch.bytes);
  if (message.simple) {
    unpack_simple(message, scratch.bytes, scratch.values);
  } else {
    const grib::Handle h = grib::Handle::from_message(scratch.bytes.data(), scratch.bytes.size(), message.where());
    h.get_doubles("values", scratch.values);
    apply_bitmap(h, scratch.values);
  }
  if (scratch.values.size() != grid.n_points())
    throw DataError(message.where() + ": " + std::to_string(scratch.values.size()) + " values for a grid of " +
                    std::to_string(grid.ni) + " x " + std::to_string(grid.nj) + " points");
  to_latitude_major(scratch.values, grid, message.to_metres, out);
}

std::vector<float> decode_grib_field(const GribMessage& message, const GribGrid& grid) {
  std::vector<float> out;
  GribDecodeScratch scratch;
  decode_grib_field(message, grid, out, scratch);
  return out;
}

}  // namespace isohypse
