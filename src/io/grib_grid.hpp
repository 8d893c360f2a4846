// Internal: the grid of a GRIB message (regular_ll, regular_gg) with its
// latitudes and longitudes in storage order, from the message's section 2/3
// keys as ecCodes decodes them. Scanning modes: WMO Manual on Codes, FM 92
// GRIB edition 2, Flag table 3.4 (edition 1: Code table 8): bit 1
// iScansNegatively, bit 2 jScansPositively, bit 3 jPointsAreConsecutive,
// bit 4 alternativeRowScanning (refused).
#pragma once

#include <map>
#include <string>

#include "io/grib_handle.hpp"
#include "isohypse/io/grib_index.hpp"

namespace isohypse::grib {

// The grid of the message h: a DataError naming h.where(), the grid type and
// what to do for any grid other than regular_ll and regular_gg, and for
// boustrophedonic rows or a scanning mode that contradicts the first and
// last points.
GribGrid read_grid(const Handle& h);

// Messages of one set share a few grids: each distinct grid (by its defining
// keys) is computed once (Gaussian latitudes cost a root search).
class GridCache {
public:
  const GribGrid& grid_of(const Handle& h);

private:
  std::map<std::string, GribGrid> grids_;
};

}  // namespace isohypse::grib
