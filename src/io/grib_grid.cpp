#include "io/grib_grid.hpp"

#include <algorithm>
#include <cmath>
#include <functional>

#include "isohypse/base/error.hpp"

namespace isohypse::grib {

namespace {

// n equally spaced values from first to last.
std::vector<double> spaced(double first, double last, long n) {
  std::vector<double> v(static_cast<std::size_t>(n));
  for (long k = 0; k < n; ++k) v[k] = n == 1 ? first : first + (last - first) * static_cast<double>(k) / (n - 1);
  return v;
}

// Longitudes along a row: eastward unless iScansNegatively; the last point is
// moved by whole turns so that the row is contiguous (350 .. 10 E becomes
// 350 .. 370).
std::vector<double> row_longitudes(const Handle& h, long ni, bool negative) {
  const double first = h.get_double("longitudeOfFirstGridPointInDegrees");
  double last = h.get_double("longitudeOfLastGridPointInDegrees");
  if (ni > 1) {
    while (!negative && last <= first) last += 360.0;
    while (negative && last >= first) last -= 360.0;
  }
  return spaced(first, last, ni);
}

// Rows in the scanning direction the message states, checked against its
// first and last latitudes.
void check_rows(const Handle& h, const std::vector<double>& lat, bool positive) {
  if (lat.size() < 2) return;
  const bool ascending = lat.back() > lat.front();
  if (ascending != positive)
    throw DataError(h.where() + ": the scanning mode says rows run " + (positive ? "north" : "south") +
                    "ward (jScansPositively = " + (positive ? "1" : "0") + ") but the first latitude is " +
                    std::to_string(lat.front()) + " and the last " + std::to_string(lat.back()) +
                    ": the grid definition is damaged");
}

std::vector<double> gaussian_latitudes(const Handle& h, long nj, bool positive) {
  std::vector<double> lat = h.get_doubles("distinctLatitudes");
  if (static_cast<long>(lat.size()) != nj)
    throw DataError(h.where() + ": regular_gg with Nj = " + std::to_string(nj) + " rows but ecCodes gives " +
                    std::to_string(lat.size()) + " Gaussian latitudes in its area");
  if (positive)
    std::sort(lat.begin(), lat.end());
  else
    std::sort(lat.begin(), lat.end(), std::greater<>());
  return lat;
}

std::string grid_key(const Handle& h, const std::string& type) {
  std::string key = type;
  for (const char* k : {"Ni", "Nj", "iScansNegatively", "jScansPositively", "jPointsAreConsecutive",
                        "alternativeRowScanning"})
    key += " " + (h.defined(k) ? std::to_string(h.get_long(k)) : std::string("-"));
  for (const char* k : {"latitudeOfFirstGridPointInDegrees", "latitudeOfLastGridPointInDegrees",
                        "longitudeOfFirstGridPointInDegrees", "longitudeOfLastGridPointInDegrees"})
    key += " " + std::to_string(h.get_double(k));
  return key;
}

}  // namespace

GribGrid read_grid(const Handle& h) {
  GribGrid g;
  g.type = h.get_string("gridType");
  if (g.type != "regular_ll" && g.type != "regular_gg")
    throw DataError(h.where() + ": grid type " + g.type +
                    " is not read by isohypse, which reads regular latitude-longitude (regular_ll) and "
                    "regular Gaussian (regular_gg) grids: interpolate to a regular grid first");
  if (h.defined("alternativeRowScanning") && h.get_long("alternativeRowScanning") != 0)
    throw DataError(h.where() + ": rows scanned in alternate directions (alternativeRowScanning = 1) are not "
                    "read: interpolate or rewrite the field with all rows in one direction first");
  g.ni = h.get_long("Ni");
  g.nj = h.get_long("Nj");
  if (g.ni < 1 || g.nj < 1 || g.ni > 1000000 || g.nj > 1000000)
    throw DataError(h.where() + ": grid of " + std::to_string(g.ni) + " x " + std::to_string(g.nj) + " points");
  if (h.defined("numberOfDataPoints") && h.get_long("numberOfDataPoints") != g.ni * g.nj)
    throw DataError(h.where() + ": " + std::to_string(h.get_long("numberOfDataPoints")) +
                    " data points for a grid of Ni x Nj = " + std::to_string(g.ni) + " x " + std::to_string(g.nj) +
                    ": the grid definition is damaged");
  g.i_scans_negatively = h.get_long("iScansNegatively") != 0;
  g.j_scans_positively = h.get_long("jScansPositively") != 0;
  g.j_points_consecutive = h.get_long("jPointsAreConsecutive") != 0;
  if (g.type == "regular_ll")
    g.latitudes = spaced(h.get_double("latitudeOfFirstGridPointInDegrees"),
                         h.get_double("latitudeOfLastGridPointInDegrees"), g.nj);
  else
    g.latitudes = gaussian_latitudes(h, g.nj, g.j_scans_positively);
  check_rows(h, g.latitudes, g.j_scans_positively);
  g.longitudes = row_longitudes(h, g.ni, g.i_scans_negatively);
  return g;
}

const GribGrid& GridCache::grid_of(const Handle& h) {
  const std::string type = h.get_string("gridType");
  if (type != "regular_ll" && type != "regular_gg") read_grid(h);  // throws, naming the type
  const std::string key = grid_key(h, type);
  auto it = grids_.find(key);
  if (it == grids_.end()) it = grids_.emplace(key, read_grid(h)).first;
  return it->second;
}

}  // namespace isohypse::grib
