// One NetCDF/HDF5 file seen as 500 hPa heights: which variable, which level,
// the grid, the time axis and the ensemble members, and hyperslab reads of
// just the domain, level, member and time steps asked for.
//
// What it handles (CF Conventions 1.10; NetCDF User Guide app. B):
//  - NetCDF-3 classic and 64-bit offset, NetCDF-4 and NetCDF-4 classic (HDF5)
//    through netCDF-C;
//  - the height variable found by standard_name (geopotential,
//    geopotential_height), then units, then common names, or named by the
//    user; an ambiguous choice is refused, listing the candidates;
//  - the level picked from a pressure dimension in hPa, Pa or mbar; a file
//    without a level dimension is taken as single-level (its `lev`/`level`
//    attribute, if any, must match);
//  - packing: value = packed * scale_factor + add_offset, after _FillValue,
//    missing_value and valid_min/valid_max/valid_range (in packed units)
//    turned into NaN; geopotential (m2 s-2) / g0 (9.80665 m s-2) -> metres,
//    "dam" -> metres;
//  - latitudes returned ascending, the domain's longitudes contiguous for
//    files in 0..360 or -180..180 and domains across the dateline or the
//    prime meridian;
//  - CF time in every CF calendar (see calendar.hpp).
// Every error names the file. Not thread-safe (netCDF-C is not): use one
// dataset from one thread (unpack() is the exception, see RawBlock).
#pragma once

#include <armadillo>
#include <memory>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/field.hpp"

namespace isohypse {

// Standard gravity (WMO), m s-2: geopotential / kStandardGravity = metres.
inline constexpr double kStandardGravity = 9.80665;

// A variable that could hold 500 hPa heights, with why it qualifies.
struct HeightCandidate {
  std::string name;
  std::string standard_name;
  std::string units;
  std::string long_name;
  std::vector<std::string> dims;  // dimension names, slowest first
  bool geopotential = false;      // m2 s-2 (true) or metres of height (false)
  int score = 0;                  // 3 for the standard_name, +2 for height units, +1 for a common name;
                                  // a candidate scores at least 3
};

// How the stored numbers become physical values. Every number here is in
// packed (stored) units.
struct Packing {
  bool packed = false;          // scale_factor or add_offset present
  double scale_factor = 1.0;
  double add_offset = 0.0;
  std::vector<double> missing;  // _FillValue (or netCDF's default fill) then missing_value codes
  std::optional<double> valid_min, valid_max;
  std::string stored_type;      // "short", "float", ...
};

// What a file holds, in the file's own order, decoded.
struct DatasetInfo {
  std::string path;
  std::string format;                 // e.g. "NetCDF-4 classic model"
  std::vector<HeightCandidate> candidates;  // best first
  std::string variable;               // the chosen one
  std::string units;                  // as in the file
  double to_metres = 1.0;             // multiply unpacked values by this (1 / g0 for geopotential, 10 for dam)
  bool geopotential = false;
  Packing packing;
  arma::vec file_lat;                 // degrees north, as stored (ascending or descending)
  arma::vec file_lon;                 // degrees east, as stored (increasing)
  std::vector<double> levels;         // hPa, empty when there is no level dimension
  std::string level_note;             // how the level was chosen (for inspect)
  std::size_t level_index = 0;        // into levels (0 without a level dimension)
  double level_hpa = 500.0;           // the level read (hPa): plausible_heights() checks against it
  Calendar calendar = Calendar::Standard;
  std::string time_units;             // as in the file, "UNIT since DATE"
  std::vector<Instant> times;         // decoded, in file order
  std::optional<Instant> reference_time;  // forecast_reference_time, if any
  std::string time_dim;
  std::size_t members = 1;            // length of the member dimension (1 if none)
  std::string member_dim;             // empty if none
  std::vector<int> member_numbers;    // values of the member coordinate, if it has one
  std::optional<int> member_number;   // a per-member file's number (scalar realization/number variable or attribute)
  // A lead layout with several initialisations in the file (an
  // initialisation or hindcast-date dimension beside the lead): each one's
  // reference time and valid times, in the order of that dimension; `times`
  // and `reference_time` are then the first one's. Empty otherwise.
  std::string init_dim;
  std::vector<Instant> init_times;
  std::vector<std::vector<Instant>> valid_by_init;

  bool lat_descending() const { return file_lat.n_elem > 1 && file_lat(0) > file_lat(file_lat.n_elem - 1); }
  // "0..360", "-180..180", "regional LO..HI" (not the whole circle) or
  // "none" (no longitudes).
  std::string lon_convention() const;
  // True when the longitudes, with one more step, close the circle.
  bool global_in_lon() const;
};

// Which part of the file's grid a domain takes, and in what order.
struct DomainSelection {
  Grid grid;                                 // the output grid: latitudes ascending, longitudes contiguous
  std::size_t lat_start = 0, lat_count = 0;  // the file's latitude index range
  // A run of consecutive file longitudes [start, start + count) that lands
  // at output column out_offset.
  struct Run { std::size_t start, count, out_offset; };
  std::vector<Run> lon_runs;                 // in output order (more than one across the file's seam)
};

// A hyperslab's compressed chunks as the file stores them: filled by the
// HDF5 chunk reader (src/io/hdf5_chunks.hpp), inflated by unpack() on any
// thread.
struct StoredChunks {
  struct Layout {
    std::vector<std::size_t> chunk;   // chunk lengths per dimension
    std::vector<int> filters;         // the pipeline in write order: 1 deflate, 2 shuffle
    std::size_t type_size = 4;        // bytes per value
    int type = 0;                     // 0 float32, 1 float64, 2 int16
  };
  struct Chunk {
    std::vector<std::size_t> offset;  // of the chunk's first value, per dimension
    unsigned filter_mask = 0;         // bit i set: filter i was not applied to this chunk
    std::vector<unsigned char> bytes;
  };
  Layout layout;
  std::vector<std::size_t> start, count;  // the hyperslab
  std::vector<Chunk> chunks;
};

// The values of one read as the file stores them (packed, file order), with
// what it takes to unpack them. HeightDataset::read_raw fills it (netCDF-C:
// one thread at a time); unpack() turns it into metres on the domain's grid
// without netCDF-C, on any thread. The buffer keeps its memory from read to
// read.
struct RawBlock {
  // One hyperslab read: a longitude run's box or the whole horizontal plane.
  struct Box {
    std::size_t offset = 0;    // into values
    std::size_t lat_skip = 0;  // the domain's first latitude row within the box
    std::size_t s_time = 1, s_lat = 1, s_lon = 1;  // strides in values
    std::vector<DomainSelection::Run> runs;        // longitude starts relative to the box
    StoredChunks stored;                           // compressed: inflated into values by unpack()
    bool inflated = true;
  };
  std::string path;  // for messages
  std::vector<float> values;
  std::vector<Box> boxes;
  std::size_t nlat = 0, nlon_out = 0, count = 0;  // the output grid's size and the time steps
  bool lat_descending = false;
  Packing packing;
  double to_metres = 1.0;
  double level_hpa = std::numeric_limits<double>::quiet_NaN();  // NaN: no plausibility check
};

// The heights a pressure level can plausibly have, in metres: the ICAO
// standard atmosphere's height of the level (ICAO 1993, Manual of the ICAO
// Standard Atmosphere, Doc 7488: 288.15 K and 6.5 K/km up to 11 km, then
// isothermal at 216.65 K) less 28 % (at least 600 m) and plus 17 % (at least
// 600 m). At 500 hPa that is 4,014-6,522 m, the common-practice range of
// about 4,000-6,500 m; at 850 hPa 857-2,057 m; at 250 hPa 7,461-12,125 m (rounded).
struct HeightRange {
  double lo, hi;
};
HeightRange plausible_heights(double level_hpa);

// Heights in metres (n_points x count, NaN where missing; the points in the
// output grid's order, see field.hpp) from a raw block, inflating its
// compressed chunks first; returns how many values were missing. `out`
// keeps its memory when its size holds. Throws DataError naming the file
// when a chunk does not inflate. With raw.level_hpa set, a value outside
// plausible_heights() is missing too (and counted); when more than 1 % of
// the block is, the block is refused (DataError naming the file, the range
// found and the range expected: wrong units or a damaged file).
std::size_t unpack(RawBlock& raw, arma::fmat& out);

// The part of a grid (info.file_lat, file_lon, path) that `domain` takes
// (the whole grid when empty): HeightDataset::select, and the same for a
// grid read otherwise (GRIB). Throws InputError naming info.path when the
// grid does not cover the domain, listing both.
DomainSelection select_domain(const DatasetInfo& info, const std::optional<Domain>& domain);

class HeightDataset {
public:
  // Opens `path`, chooses the variable (`variable` if given) and the level
  // (hPa). Throws InputError (missing file, unknown variable name) or
  // DataError (not NetCDF, truncated, no height variable, ambiguous, no such
  // level, unknown units, unknown or repeated dimensions, undecodable time),
  // each naming the file.
  static HeightDataset open(const std::string& path, const std::string& variable = "", double level_hpa = 500.0);
  HeightDataset(HeightDataset&&) noexcept;
  HeightDataset& operator=(HeightDataset&&) noexcept;
  ~HeightDataset();

  const DatasetInfo& info() const;

  // The selection for `domain` (the whole grid when empty). Throws InputError
  // naming the file when the grid does not cover the domain, listing both.
  DomainSelection select(const std::optional<Domain>& domain) const;

  // Heights in metres, n_points x count (the selection's grid, field.hpp
  // layout), for time steps [t0, t0+count) of member `member`: NaN where
  // missing. Throws InternalError when the steps or the member are not in
  // the file (a bug of the caller), DataError when the file cannot be read.
  arma::fmat read(const DomainSelection& sel, std::size_t t0, std::size_t count, std::size_t member = 0) const;
  // The same in two steps, for repeated reads into the same buffers: the
  // stored values (netCDF-C or HDF5: one thread at a time), then unpack()
  // on any thread; `init` indexes init_times in a file of several
  // initialisations. Throws as read().
  void read_raw(const DomainSelection& sel, std::size_t t0, std::size_t count, std::size_t member,
                RawBlock& raw, std::size_t init = 0) const;

  // True when the variable's compressed chunks are read directly with HDF5
  // and inflated by unpack() (on the caller's thread) rather than inside
  // netCDF-C: zlib with or without shuffle, float32/float64/int16.
  bool inflates_chunks() const;

  // Number of values equal to a fill/missing/out-of-range code in the chosen
  // variable at the chosen level over the whole grid and all steps.
  std::size_t count_missing() const;

private:
  struct Impl;
  explicit HeightDataset(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

// Lists the candidate height variables of a file without choosing (for
// inspect, which describes files that open() refuses too). Throws as
// nc::File::open: InputError for a missing file, DataError for one that is
// not NetCDF.
std::vector<HeightCandidate> list_height_candidates(const std::string& path);

}  // namespace isohypse
