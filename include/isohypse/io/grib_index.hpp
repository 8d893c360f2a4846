// GRIB files (editions 1 and 2) seen as an index of height messages, scanned
// through ecCodes without decoding any values (grib_decode.hpp decodes).
//
// What a message is, for isohypse: geopotential (paramId 129, shortName z,
// m2 s-2, divided by g0 = 9.80665 m s-2 to give metres) or geopotential
// height (paramId 156, shortName gh, gpm = metres), on one isobaric level, of
// one member (perturbation number; 0 for the control forecast, an analysis or
// a deterministic forecast), one initialisation (dataDate, dataTime) and one
// lead (the step, or the end of a step range, turned into hours from its
// units). Messages may come in any order and from several files.
//
// Grids: regular latitude-longitude (regular_ll) and regular Gaussian
// (regular_gg), in any of the scanning directions of the WMO Manual on Codes
// (FM 92 GRIB edition 2, Flag table 3.4; FM 92 GRIB edition 1, Code table 8):
// latitudes and longitudes are reported in STORAGE order, i.e. the order of
// the rows and columns in the message. Every other grid (reduced Gaussian,
// spherical harmonics, rotated, Lambert, ...) is refused: interpolate to a
// regular grid first. All messages kept must share one grid.
//
// Errors: a missing file is an InputError; everything a file holds that
// isohypse cannot use (a damaged or truncated message, another parameter, no
// message at the level asked for, an unsupported or mixed grid, two messages
// for one member, initialisation, lead and level) a DataError that names the
// file (and the message's byte offset) and the problem.
//
// Thread safety: scan_grib_heights reads on the calling thread; the
// GribIndex it returns is plain data, safe to share read-only.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/io/dataset.hpp"  // kStandardGravity

namespace isohypse {


// The grid of the messages, as stored.
struct GribGrid {
  std::string type;                 // "regular_ll" or "regular_gg"
  long ni = 0;                      // points along a parallel (columns)
  long nj = 0;                      // points along a meridian (rows)
  std::vector<double> latitudes;    // nj values, degrees north, storage order
  std::vector<double> longitudes;   // ni values, degrees east, storage order, contiguous
                                    // (may pass 360 or go below 0 across the meridian)
  bool i_scans_negatively = false;  // longitudes decrease along a row
  bool j_scans_positively = false;  // latitudes increase from row to row
  bool j_points_consecutive = false;  // stored column by column (latitude fastest)

  std::size_t n_points() const { return static_cast<std::size_t>(ni) * static_cast<std::size_t>(nj); }
  // Same type, sizes, scanning and coordinates (to tol degrees).
  bool same_as(const GribGrid& other, double tol = 1e-6) const;
  // "regular_ll 360 x 181 (90 .. -90 N, 0 .. 359 E)".
  std::string describe() const;
};

// One message, without its values.
struct GribMessage {
  std::string path;            // the file
  std::uint64_t offset = 0;    // byte offset of the message's "GRIB" in the file
  std::uint64_t length = 0;    // bytes (totalLength)
  long edition = 0;            // 1 or 2
  std::string short_name;      // "z" or "gh"
  long param_id = 0;           // 129 or 156
  std::string units;           // as ecCodes names them ("m**2 s**-2", "gpm")
  double to_metres = 1.0;      // factor from the message's units to metres
  std::string type_of_level;   // "isobaricInhPa", "isobaricInPa", ...
  double level_hpa = 0.0;      // the level in hPa (isobaric levels only)
  long member = 0;             // perturbationNumber / number; 0: control, analysis, none
  std::string data_type;       // ecCodes' dataType: "cf", "pf", "an", "fc", ...
  Instant init;                // dataDate and dataTime, Calendar::Standard, UTC
  double lead_hours = 0.0;     // end of the step (range) in hours
  std::string packing;         // packingType ("grid_simple", "grid_ccsds", ...)
  long bits_per_value = 0;
  // Simple packing without a bitmap (WMO FM 92 GRIB 1 and 2, data
  // representation template 5.0): value = (R + X 2^E) / 10^D, X the
  // bits_per_value-bit unsigned integers from byte data_offset of the
  // message on. grib_decode unpacks these itself, on any thread.
  struct SimplePacking {
    double reference = 0.0;        // R (referenceValue)
    long binary_scale = 0;         // E (binaryScaleFactor)
    long decimal_scale = 0;        // D (decimalScaleFactor)
    std::uint64_t data_offset = 0; // offsetBeforeData, from the message's start
    std::uint64_t values = 0;      // numberOfValues
  };
  std::optional<SimplePacking> simple;

  // "FILE: message at byte B": the start of every message about it.
  std::string where() const;
};

struct GribIndex {
  GribGrid grid;                       // shared by every message
  std::vector<GribMessage> messages;   // sorted: init, member, lead, level
  std::vector<std::string> paths;      // the files scanned, in the order given
};

struct GribScanOptions {
  // Keep only this isobaric level (hPa); nullopt keeps every isobaric level.
  // The classify and derive stages ask for 500.
  std::optional<double> level_hpa = 500.0;
};

// Scans `paths` (each one or more concatenated GRIB messages, editions 1 and
// 2 mixed freely) and keeps the geopotential and geopotential-height messages
// on isobaric levels (the level asked for). Throws as the file header says.
GribIndex scan_grib_heights(const std::vector<std::string>& paths, const GribScanOptions& options = {});

// Whether a message is a height isohypse reads: to_metres for geopotential
// (1/g0) or geopotential height (1); nullopt for any other parameter.
std::optional<double> height_to_metres(long param_id, const std::string& short_name);

// Lead in hours of a step of `value` in GRIB time-unit code `unit` (ecCodes'
// stepUnits: WMO Code table 4.4 / GRIB1 Code table 4: 0 minute, 1 hour, 2 day,
// 10 3 hours, 11 6 hours, 12 12 hours, 13 second, 14 15 minutes, 15 30
// minutes). Months, years and other units throw DataError naming `where`.
double step_to_hours(long value, long unit, const std::string& where);

}  // namespace isohypse
