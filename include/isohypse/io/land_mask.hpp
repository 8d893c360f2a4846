// The land-sea mask that regime maps draw their coastlines from.
#pragma once

#include <armadillo>
#include <string>

namespace isohypse {

// A land-sea mask on a regular latitude-longitude grid: land(i_lat, i_lon)
// is 1 for land and 0 for sea. Latitudes ascending, longitudes increasing
// with a constant step, covering the globe.
struct LandMask {
  arma::vec lat, lon;
  arma::mat land;
  bool empty() const { return land.is_empty(); }
};

// Debian's libncarg-data ships a 1 x 1 degree mask.
inline constexpr const char* kDefaultLandSeaMask = "/usr/share/ncarg/data/cdf/landsea.nc";

// Reads LSMASK from landsea.nc (0 ocean, 1 land, 2 lake, 3 small island, 4
// ice shelf). Only the open ocean counts as sea, so lakes do not draw
// shorelines at 1 degree resolution. Throws InputError (missing) or
// DataError (no LSMASK, lat or lon) naming the file.
LandMask read_land_mask(const std::string& path);

}  // namespace isohypse
