// Internal to HeightDataset::open: which variable of a file holds the
// heights, what its units are in metres, and how its values are packed.
// Every message names the file (DatasetInfo::path).
#pragma once

#include <string>
#include <vector>

#include "io/netcdf_file.hpp"
#include "isohypse/io/dataset.hpp"

namespace isohypse::detail {

// Units of geopotential (m2 s-2: geopotential = true, to_metres = 1 / g0)
// or of geopotential height (m, gpm: 1; dam: 10). False for anything else
// (geopotential and to_metres are then left alone).
bool height_units(const std::string& units, bool& geopotential, double& to_metres);

// The variables of at least two dimensions that could hold the heights, best
// score first (HeightCandidate::score).
std::vector<HeightCandidate> find_candidates(const nc::File& file);

// The variable named `variable`, or when empty the best of info.candidates.
// Throws InputError when the named variable does not exist (listing the
// file's variables), DataError when no candidate qualifies or when the best
// score is shared (listing the tied names).
nc::Var choose_height_variable(const nc::File& file, const DatasetInfo& info, const std::string& variable);

// Sets info.variable, info.units, info.geopotential and info.to_metres from
// `var`. Throws DataError when the units are neither geopotential nor height.
void read_height_units(const nc::File& file, const nc::Var& var, DatasetInfo& info);

// The packing attributes of `var` (scale_factor, add_offset, _FillValue or
// netCDF's default fill for the type, missing_value, valid_range,
// valid_min/valid_max), all in packed units.
Packing read_packing(const nc::File& file, const nc::Var& var);

}  // namespace isohypse::detail
