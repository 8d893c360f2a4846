#include "isohypse/io/land_mask.hpp"

#include "isohypse/base/error.hpp"
#include "io/netcdf_file.hpp"

namespace isohypse {

LandMask read_land_mask(const std::string& path) {
  nc::File f = nc::File::open(path);
  auto lat = f.find_var("lat"), lon = f.find_var("lon"), mask = f.find_var("LSMASK");
  if (!lat || !lon || !mask) throw DataError(path + ": expected variables lat, lon and LSMASK (a land-sea mask)");
  LandMask m;
  m.lat = arma::vec(f.read_all(lat->id));
  m.lon = arma::vec(f.read_all(lon->id));
  std::vector<double> v = f.read_all(mask->id);
  if (v.size() != m.lat.n_elem * m.lon.n_elem || m.lon.n_elem < 2 || m.lat.n_elem < 2)
    throw DataError(path + ": LSMASK has " + std::to_string(v.size()) + " values, expected lat x lon = " +
                    std::to_string(m.lat.n_elem) + " x " + std::to_string(m.lon.n_elem));
  // Stored (lat, lon) row-major; Armadillo is column-major, hence the transpose.
  arma::mat raw(v.data(), m.lon.n_elem, m.lat.n_elem);
  m.land = arma::conv_to<arma::mat>::from(raw.t() != 0.0);
  if (m.lat(0) > m.lat(m.lat.n_elem - 1)) {
    m.lat = arma::flipud(m.lat);
    m.land = arma::flipud(m.land);
  }
  return m;
}

}  // namespace isohypse
