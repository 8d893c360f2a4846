// Internal to io/inspect: a GRIB file (editions 1 and 2) described the way
// inspect describes a NetCDF file, from its index (grib_index.hpp) without
// decoding values: the height parameters, the isobaric levels, the grid as
// stored (type, size, scanning, extent), the members, leads,
// initialisations and valid times, the calendar (proleptic Gregorian, UTC),
// the packing and bits per value, and the editions.
#pragma once

#include <nlohmann/json.hpp>
#include <string>

namespace isohypse::detail {

// The description of `path` (every isobaric level is listed; `level_hpa` is
// the one the readers would take). Throws InputError or DataError as
// scan_grib_heights does, and DataError naming the file when no message is
// at `level_hpa`; describe_file turns either into "error".
nlohmann::json describe_grib_file(const std::string& path, double level_hpa);
// The readable text of such a description (describe_text for GRIB).
std::string describe_grib_text(const nlohmann::json& description);

}  // namespace isohypse::detail
