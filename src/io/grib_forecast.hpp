// Internal to io/forecast: GRIB forecast messages (grib_index.hpp) seen as
// the forecast reader sees NetCDF files. The messages of all the GRIB files
// given are grouped by initialisation (dataDate, dataTime) and member
// (perturbation number, the control member 0 included); each member must
// have a message for every lead the initialisation has, and the valid times
// (initialisation plus lead) go through the same lead-day rules as NetCDF
// forecasts. A member is read by decoding its messages lead by lead into a
// RawBlock over the whole grid, in the grid's storage order of latitudes and
// with longitudes increasing (a row scanned westward is reversed), so that
// the domain selection and unpack() serve GRIB as they serve NetCDF.
#pragma once

#include <string>
#include <vector>

#include "isohypse/io/dataset.hpp"
#include "isohypse/io/grib_decode.hpp"
#include "isohypse/io/grib_index.hpp"

namespace isohypse::detail {

// True when the file starts with the bytes "GRIB" (a missing or unreadable
// file is left to the NetCDF reader's messages).
bool is_grib_file(const std::string& path);

// The grid and calendar of the index as a DatasetInfo (path: the first
// file; format "GRIB edition ..."; latitudes as stored, longitudes
// increasing; metres; the proleptic Gregorian calendar, UTC).
DatasetInfo grib_dataset_info(const GribIndex& index);

struct GribInitialisation {
  Instant init;
  std::vector<long> members;                    // perturbation numbers, ascending
  std::vector<std::vector<std::size_t>> steps;  // per member: its messages (into index.messages), by lead
  std::vector<Instant> valid;                   // per lead: init + lead
};

// The index's initialisations, by date. Throws DataError naming the files
// when a member lacks a lead another member of its initialisation has.
std::vector<GribInitialisation> grib_initialisations(const GribIndex& index);

// The member's messages `steps`, decoded into raw (every lead; the selection
// `sel` of grib_dataset_info's grid). Throws as decode_grib_field.
void read_grib_member(const GribIndex& index, const std::vector<std::size_t>& steps, const DomainSelection& sel,
                      RawBlock& raw, GribDecodeScratch& scratch);

}  // namespace isohypse::detail
