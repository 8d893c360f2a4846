#include "isohypse/base/field.hpp"

#include <cmath>
#include <sstream>

#include "isohypse/base/error.hpp"

namespace isohypse {

double Domain::lon_extent() const {
  double e = std::fmod(lon_east - lon_west, 360.0);
  if (e <= 0) e += 360.0;
  return e;
}

Domain Domain::parse(const std::string& text, const std::string& what) {
  std::vector<double> v;
  std::stringstream ss(text);
  std::string item;
  while (std::getline(ss, item, ',')) {
    try {
      std::size_t used = 0;
      v.push_back(std::stod(item, &used));
      if (item.find_first_not_of(" \t", used) != std::string::npos) throw std::invalid_argument(item);
    } catch (const std::exception&) {
      throw InputError(what + ": '" + item + "' is not a number (expected LAT_MIN,LAT_MAX,LON_WEST,LON_EAST)");
    }
  }
  if (v.size() != 4)
    throw InputError(what + ": '" + text + "' has " + std::to_string(v.size()) +
                     " numbers; expected 4: LAT_MIN,LAT_MAX,LON_WEST,LON_EAST (e.g. 20,80,170,-40)");
  Domain d{v[0], v[1], v[2], v[3]};
  if (d.lat_min < -90 || d.lat_max > 90 || d.lat_min >= d.lat_max)
    throw InputError(what + ": latitudes " + std::to_string(d.lat_min) + ".." + std::to_string(d.lat_max) +
                     " must satisfy -90 <= LAT_MIN < LAT_MAX <= 90");
  if (d.lon_west < -360 || d.lon_west > 360 || d.lon_east < -360 || d.lon_east > 720)
    throw InputError(what + ": longitudes must lie within -360..720 degrees east");
  return d;
}

std::string Domain::to_string() const {
  std::ostringstream o;
  o << lat_min << "," << lat_max << "," << lon_west << "," << lon_east;
  return o.str();
}

arma::vec Grid::sqrt_cos_weights() const {
  arma::vec w(n_points());
  const double deg = M_PI / 180.0;
  for (arma::uword i = 0; i < n_lat(); ++i) {
    double c = std::cos(lat(i) * deg);
    double s = c > 0 ? std::sqrt(c) : 0.0;
    for (arma::uword j = 0; j < n_lon(); ++j) w(i * n_lon() + j) = s;
  }
  return w;
}

double axis_step(const arma::vec& axis) {
  if (axis.n_elem < 2) return 0.0;
  return std::abs(axis(axis.n_elem - 1) - axis(0)) / double(axis.n_elem - 1);
}

bool Grid::same_as(const Grid& other, double tol) const {
  if (lat.n_elem != other.lat.n_elem || lon.n_elem != other.lon.n_elem) return false;
  if (arma::any(arma::abs(lat - other.lat) > tol)) return false;
  // Longitudes equal modulo 360 (170..320 is the same as 170..-40 unwrapped).
  for (arma::uword j = 0; j < lon.n_elem; ++j) {
    double d = std::fmod(std::abs(lon(j) - other.lon(j)), 360.0);
    if (std::min(d, 360.0 - d) > tol) return false;
  }
  return true;
}

std::vector<char> consecutive_flags(const std::vector<Date>& dates) {
  std::vector<char> out(dates.size(), 0);
  for (std::size_t t = 1; t < dates.size(); ++t) out[t] = days_between(dates[t - 1], dates[t]) == 1;
  return out;
}

}  // namespace isohypse
