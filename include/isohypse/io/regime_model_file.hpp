// The regime model file: everything the later stages need, in one
// self-describing file. Written by `derive`, read by `classify`, `verify`
// and `serve`.
//
// File format (format_version in regime_model.hpp): NetCDF-4 (HDF5
// underneath; h5py and xarray open it), documented in the README ("The
// regime model file"). Dimensions lat, lon, point, coef, eof, regime, state
// (regime + no regime), day, k_row. Written to a temporary file and renamed.
#pragma once

#include <string>

#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

// Writes atomically (temporary file, then rename). Throws InputError naming
// the path when it cannot be written.
void write_regime_model(const RegimeModel& model, const std::string& path);
// Reads and checks the format version (a different one is refused, naming
// both). Throws InputError (missing) or DataError (not a regime model).
RegimeModel read_regime_model(const std::string& path);
// True when `path` opens as NetCDF and carries isohypse_format_version (of
// any version): a regime model rather than a height file. Never throws.
bool is_regime_model(const std::string& path);

}  // namespace isohypse
