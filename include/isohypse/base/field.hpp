// The one data type that travels between stages: gridded 500 hPa heights (or
// their anomalies) on a regular latitude-longitude grid, with dates.
//
// Layout, chosen once for the whole library: values is n_points x n_times,
// one time step per COLUMN (Armadillo is column-major, so a day is contiguous).
// Point index p = i_lat * n_lon + i_lon (longitude fastest), latitudes
// ascending (south to north), longitudes contiguous and increasing eastward
// (they may run past 180 or 360 for a domain across the dateline or the prime
// meridian, e.g. 170 .. 320). Missing values are NaN. Heights are in metres.
#pragma once

#include <armadillo>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"

namespace isohypse {

// A latitude-longitude box. The domain runs eastward from lon_west to
// lon_east: (20, 80, 170, -40) and (20, 80, 170, 320) are the same domain
// across the dateline; lon_west == lon_east (mod 360) with full_circle means
// all longitudes.
struct Domain {
  double lat_min = -90.0;
  double lat_max = 90.0;
  double lon_west = 0.0;
  double lon_east = 360.0;

  // Eastward extent in degrees, in (0, 360].
  double lon_extent() const;
  // Parses "LAT_MIN,LAT_MAX,LON_WEST,LON_EAST"; throws InputError naming
  // `what` (a flag or config key) and the problem.
  static Domain parse(const std::string& text, const std::string& what = "--domain");
  std::string to_string() const;
};

struct Grid {
  arma::vec lat;  // degrees north, ascending
  arma::vec lon;  // degrees east, contiguous, increasing

  arma::uword n_lat() const { return lat.n_elem; }
  arma::uword n_lon() const { return lon.n_elem; }
  arma::uword n_points() const { return lat.n_elem * lon.n_elem; }
  // sqrt(cos(lat)) for every point (p = i_lat * n_lon + i_lon): multiply
  // anomalies by it so that the covariance is area-weighted.
  arma::vec sqrt_cos_weights() const;
  bool same_as(const Grid& other, double tol = 1e-6) const;
};

struct Field {
  Grid grid;
  std::vector<Date> dates;   // one per column, all in one calendar
  arma::fmat values;         // n_points x n_times, metres, NaN = missing
  std::string variable;      // name in the source files
  std::string units = "m";
  std::vector<std::string> sources;  // files it was read from

  arma::uword n_points() const { return values.n_rows; }
  arma::uword n_times() const { return values.n_cols; }
};

// The spacing of a coordinate axis in its own units (degrees for lat/lon):
// the mean absolute step |last - first| / (n - 1), so ascending and
// descending axes give the same positive value; 0 for fewer than 2 values.
// Equals every step of a regular axis.
double axis_step(const arma::vec& axis);

// For each day, whether it immediately follows the previous one (false for
// the first day, after a gap, and across season breaks). Stages that count
// transitions or estimate lag-1 autocorrelation use it.
std::vector<char> consecutive_flags(const std::vector<Date>& dates);

}  // namespace isohypse
