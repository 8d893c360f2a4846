#include "files.hpp"

#include <algorithm>
#include <cmath>
#include <initializer_list>
#include <utility>

#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/error.hpp"
#include "io/netcdf_file.hpp"
#include "grib_files.hpp"

namespace demo {

using isohypse::Calendar;
using isohypse::Date;
namespace nc = isohypse::nc;

namespace {

constexpr short kPackedFill = -32767;
constexpr double kPackedHalfRange = 32766.0;  // packed values use -32766..32766, the fill stays free
const std::string kSource = "isohypse-demo-world: an invented world (no real data)";

enum class Format { Netcdf4, Netcdf4Classic, Offset64 };

nc::File create_file(const std::string& path, Format format) {
  if (format == Format::Offset64) return nc::File::create(path, false, true);
  if (format == Format::Netcdf4) return nc::File::create(path);
  // The wrapper has no NetCDF-4 classic-model switch; nc_create without a
  // format flag (create(path, classic=true)) takes netCDF's default format,
  // so set that default for this one call.
  int previous = NC_FORMAT_CLASSIC;
  nc::check(nc_set_default_format(NC_FORMAT_NETCDF4_CLASSIC, &previous), "nc_set_default_format", path);
  struct Restore {
    int format;
    ~Restore() { nc_set_default_format(format, nullptr); }
  } restore{previous};
  nc::File file = nc::File::create(path, true);
  if (file.format_name() != "NetCDF-4 classic model")
    throw isohypse::DataError(path + ": expected a NetCDF-4 classic model file, netCDF made " + file.format_name());
  return file;
}

// Writes through a temporary file that is renamed into place once closed.
template <class Body>
void write_netcdf(const std::string& path, Format format, Body&& body) {
  isohypse::AtomicFile out(path);
  nc::File file = create_file(out.temp_path(), format);
  file.put_att(NC_GLOBAL, "Conventions", "CF-1.8");
  file.put_att(NC_GLOBAL, "source", kSource);
  body(file);
  file.close();
  out.commit();
}

void put_texts(nc::File& f, int var, std::initializer_list<std::pair<const char*, std::string>> atts) {
  for (const auto& [name, text] : atts) f.put_att(var, name, text);
}

int def_latitude(nc::File& f, int dim) {
  int v = f.def_var("latitude", NC_FLOAT, {dim});
  put_texts(f, v, {{"units", "degrees_north"}, {"standard_name", "latitude"}, {"long_name", "latitude"}});
  return v;
}

int def_longitude(nc::File& f, int dim) {
  int v = f.def_var("longitude", NC_FLOAT, {dim});
  put_texts(f, v, {{"units", "degrees_east"}, {"standard_name", "longitude"}, {"long_name", "longitude"}});
  return v;
}

std::vector<Date> days_between_inclusive(const Date& first, const Date& last) {
  std::vector<Date> days;
  for (Date d = first; !(last < d); d = isohypse::add_days(d, 1)) days.push_back(d);
  return days;
}

arma::mat truth_columns(const World& world, const std::vector<Date>& days) {
  arma::mat c(world.n_terms(), days.size());
  for (std::size_t j = 0; j < days.size(); ++j) c.col(j) = world.truth_coefs(days[j]);
  return c;
}


std::size_t nearest_index(const std::vector<double>& axis_values, double x) {
  auto it = std::min_element(axis_values.begin(), axis_values.end(),
                             [x](double a, double b) { return std::abs(a - x) < std::abs(b - x); });
  return static_cast<std::size_t>(it - axis_values.begin());
}

}  // namespace

std::vector<double> forecast_lat() { return axis(16.0, 84.0, 2.0); }
std::vector<double> forecast_lon() { return axis(164.0, 326.0, 2.0); }

void write_reanalysis_year(const World& world, const Surface& surface, const std::vector<double>& lat,
                           const std::vector<double>& lon, int year, const Realities& realities,
                           const std::string& path, const std::string& grib_path) {
  std::vector<Date> days;
  for (const Date& d : days_between_inclusive(Date{year, 1, 1, Calendar::Standard}, Date{year, 12, 31, Calendar::Standard}))
    if (std::find(realities.missing_days.begin(), realities.missing_days.end(), d) == realities.missing_days.end())
      days.push_back(d);

  arma::mat phi = surface.heights(truth_columns(world, days)) * kG0;
  // Pack per file to cover this file's range, as archive downloads do.
  const double lo = phi.min(), hi = phi.max();
  const double offset = 0.5 * (hi + lo);
  const double scale = std::max(hi - lo, 1.0) / (2.0 * kPackedHalfRange);
  std::vector<short> packed(phi.n_elem);
  for (arma::uword i = 0; i < phi.n_elem; ++i)
    packed[i] = static_cast<short>(std::clamp(std::round((phi(i) - offset) / scale), -kPackedHalfRange, kPackedHalfRange));
  const std::size_t n_points = lat.size() * lon.size();
  for (const auto& hole : realities.holes) {
    auto day = std::find(days.begin(), days.end(), hole.day);
    if (day == days.end()) continue;
    std::size_t t = static_cast<std::size_t>(day - days.begin());
    packed[t * n_points + nearest_index(lat, hole.lat) * lon.size() + nearest_index(lon, hole.lon)] = kPackedFill;
  }

  static const Date epoch{1900, 1, 1, Calendar::Standard};
  std::vector<double> hours;
  for (const Date& d : days) hours.push_back(24.0 * static_cast<double>(isohypse::days_between(epoch, d)));

  write_netcdf(path, Format::Netcdf4Classic, [&](nc::File& f) {
    f.put_att(NC_GLOBAL, "title", "Daily 00 UTC 500 hPa geopotential, invented reanalysis " + std::to_string(year));
    int d_lon = f.def_dim("longitude", lon.size());
    int d_lat = f.def_dim("latitude", lat.size());
    int d_time = f.def_dim("time", days.size());
    int v_lon = def_longitude(f, d_lon);
    int v_lat = def_latitude(f, d_lat);
    int v_time = f.def_var("time", NC_INT, {d_time});
    put_texts(f, v_time, {{"units", "hours since 1900-01-01 00:00:00.0"}, {"long_name", "time"}, {"calendar", "gregorian"}});
    int v_z = f.def_var("z", NC_SHORT, {d_time, d_lat, d_lon});
    f.put_att(v_z, "scale_factor", NC_DOUBLE, {scale});
    f.put_att(v_z, "add_offset", NC_DOUBLE, {offset});
    f.put_att(v_z, "_FillValue", NC_SHORT, {kPackedFill});
    f.put_att(v_z, "missing_value", NC_SHORT, {kPackedFill});
    put_texts(f, v_z, {{"units", "m**2 s**-2"}, {"long_name", "Geopotential"}, {"standard_name", "geopotential"}});
    f.end_define();
    f.write_all(v_lon, lon);
    f.write_all(v_lat, lat);
    f.write_all(v_time, hours);
    f.write(v_z, {0, 0, 0}, {days.size(), lat.size(), lon.size()}, packed.data());
  });
  if (grib_path.empty()) return;
  // The GRIB copy holds the values the NetCDF file holds (unpacked), its fill values missing.
  arma::mat unpacked(n_points, days.size());
  for (std::size_t t = 0; t < days.size(); ++t)
    for (std::size_t p = 0; p < n_points; ++p) {
      const short k = packed[t * n_points + p];
      unpacked(p, t) = k == kPackedFill ? arma::datum::nan : offset + scale * k;
    }
  write_reanalysis_year_grib(lat, lon, days, unpacked, grib_path);
}

void write_analysis(const World& world, const Date& first, const Date& last, double step, const std::string& path) {
  const std::vector<double> lat = axis(-90.0, 90.0, step), lon = axis(0.0, 360.0 - step, step);
  const std::vector<Date> days = days_between_inclusive(first, last);
  const Surface surface(world, Points::product(lat, lon));
  const arma::mat h500 = surface.heights(truth_columns(world, days));

  // 850 and 250 hPa as simple linear maps of 500 hPa (about 1.3-1.7 km and 9.7-11 km).
  const std::vector<double> levels = {850.0, 500.0, 250.0};
  auto at_level = [](std::size_t level, double h) {
    if (level == 0) return 1480.0 + 0.42 * (h - 5500.0);
    if (level == 2) return 10350.0 + 1.65 * (h - 5500.0);
    return h;
  };
  const std::size_t n_points = h500.n_rows;
  std::vector<float> values(days.size() * levels.size() * n_points);
  for (std::size_t t = 0; t < days.size(); ++t)
    for (std::size_t l = 0; l < levels.size(); ++l)
      for (std::size_t p = 0; p < n_points; ++p)
        values[(t * levels.size() + l) * n_points + p] = static_cast<float>(at_level(l, h500(p, t)));

  static const Date epoch{2025, 1, 1, Calendar::Standard};
  std::vector<double> time;
  for (const Date& d : days) time.push_back(static_cast<double>(isohypse::days_between(epoch, d)));

  write_netcdf(path, Format::Offset64, [&](nc::File& f) {
    f.put_att(NC_GLOBAL, "title", "Daily geopotential height at three levels, invented analysis");
    int d_time = f.def_dim("time", days.size());
    int d_level = f.def_dim("level", levels.size());
    int d_lat = f.def_dim("lat", lat.size());
    int d_lon = f.def_dim("lon", lon.size());
    int v_time = f.def_var("time", NC_DOUBLE, {d_time});
    put_texts(f, v_time, {{"units", "days since 2025-01-01"}, {"calendar", "standard"}, {"standard_name", "time"}});
    int v_level = f.def_var("level", NC_FLOAT, {d_level});
    put_texts(f, v_level, {{"units", "hPa"}, {"long_name", "pressure level"}, {"positive", "down"}, {"axis", "Z"}});
    int v_lat = f.def_var("lat", NC_FLOAT, {d_lat});
    put_texts(f, v_lat, {{"units", "degrees_north"}, {"standard_name", "latitude"}});
    int v_lon = f.def_var("lon", NC_FLOAT, {d_lon});
    put_texts(f, v_lon, {{"units", "degrees_east"}, {"standard_name", "longitude"}});
    int v_hgt = f.def_var("hgt", NC_FLOAT, {d_time, d_level, d_lat, d_lon});
    put_texts(f, v_hgt, {{"units", "m"}, {"standard_name", "geopotential_height"}, {"long_name", "geopotential height"}});
    f.end_define();
    f.write_all(v_time, time);
    f.write_all(v_level, levels);
    f.write_all(v_lat, lat);
    f.write_all(v_lon, lon);
    f.write(v_hgt, {0, 0, 0, 0}, {days.size(), levels.size(), lat.size(), lon.size()}, values.data());
  });
}

Points forecast_points() { return Points::product(forecast_lat(), forecast_lon()); }

std::vector<Trajectory> model_run(const World& world, const Date& init, int members, ModelSystem system) {
  std::vector<Trajectory> runs;
  for (int m = 0; m < members; ++m) runs.push_back(world.member(init, m, system));
  return runs;
}

arma::mat member_heights(const Surface& surface, const std::vector<Trajectory>& runs) {
  const auto members = static_cast<arma::uword>(runs.size());
  arma::mat coefs(runs.front().coefs.n_rows, members * kLeads);
  for (arma::uword m = 0; m < members; ++m) coefs.cols(m * kLeads, (m + 1) * kLeads - 1) = runs[m].coefs;
  // Rounded to 0.5 m: the low mantissa bits are then zero, and deflate (with
  // shuffle) packs the floats to a quarter, twice as fast as at 1/16 m.
  return arma::round(surface.heights(coefs) * 2.0) / 2.0;
}

void write_model_run(const Surface& surface, const Date& init, const std::vector<Trajectory>& runs,
                     const std::string& path) {
  const std::vector<double> lat = forecast_lat(), lon = forecast_lon();
  const auto members = static_cast<arma::uword>(runs.size());
  const arma::mat h = member_heights(surface, runs);
  const std::vector<float> values(h.begin(), h.end());

  const std::string units = "days since " + isohypse::to_string(init) + " 00:00:00";
  std::vector<double> time(kLeads), number(members);
  for (std::size_t l = 0; l < time.size(); ++l) time[l] = static_cast<double>(l);
  for (std::size_t m = 0; m < number.size(); ++m) number[m] = static_cast<double>(m);

  write_netcdf(path, Format::Netcdf4, [&](nc::File& f) {
    f.put_att(NC_GLOBAL, "title", "Invented ensemble forecast of 500 hPa geopotential height, initialised " +
                                      isohypse::to_string(init) + " 00 UTC");
    int d_number = f.def_dim("number", number.size());
    int d_time = f.def_dim("time", time.size());
    int d_lat = f.def_dim("latitude", lat.size());
    int d_lon = f.def_dim("longitude", lon.size());
    int v_number = f.def_var("number", NC_INT, {d_number});
    put_texts(f, v_number, {{"long_name", "ensemble member number"}, {"standard_name", "realization"}});
    int v_time = f.def_var("time", NC_DOUBLE, {d_time});
    put_texts(f, v_time, {{"units", units}, {"calendar", "noleap"}, {"standard_name", "time"}, {"long_name", "valid time"}});
    int v_ref = f.def_var("forecast_reference_time", NC_DOUBLE, {});
    put_texts(f, v_ref, {{"units", units}, {"calendar", "noleap"}, {"standard_name", "forecast_reference_time"}});
    int v_lat = def_latitude(f, d_lat);
    int v_lon = def_longitude(f, d_lon);
    int v_gh = f.def_var("gh", NC_FLOAT, {d_number, d_time, d_lat, d_lon});
    put_texts(f, v_gh, {{"units", "m"}, {"standard_name", "geopotential_height"}, {"long_name", "geopotential height at 500 hPa"}});
    f.put_att(v_gh, "pressure_level_hPa", NC_FLOAT, {500.0});
    f.deflate(v_gh, 1);
    // One chunk per member, so a reader of one member or lead decompresses
    // no more than one member's worth.
    const std::size_t chunks[4] = {1, time.size(), lat.size(), lon.size()};
    nc::check(nc_def_var_chunking(f.id(), v_gh, NC_CHUNKED, chunks), "nc_def_var_chunking", path, "gh");
    f.end_define();
    f.write_all(v_number, number);
    f.write_all(v_time, time);
    const double zero = 0.0;
    f.write(v_ref, {}, {}, &zero);
    f.write_all(v_lat, lat);
    f.write_all(v_lon, lon);
    f.write(v_gh, {0, 0, 0, 0}, {number.size(), time.size(), lat.size(), lon.size()}, values.data());
  });
}

void write_model_run_steps(const Surface& surface, const Date& init, const std::vector<Trajectory>& runs,
                           const std::string& path) {
  const std::vector<double> lat = forecast_lat(), lon = forecast_lon();
  const auto members = static_cast<arma::uword>(runs.size());
  const arma::mat h = member_heights(surface, runs);
  // Stored (step, member, point) as geopotential.
  const std::size_t points = h.n_rows;
  std::vector<float> values(h.n_elem);
  for (arma::uword m = 0; m < members; ++m)
    for (arma::uword l = 0; l < static_cast<arma::uword>(kLeads); ++l)
      for (std::size_t p = 0; p < points; ++p)
        values[(l * members + m) * points + p] =
            static_cast<float>(h(p, m * kLeads + l) * 9.80665);
  const std::string units = "hours since " + isohypse::to_string(init) + " 00:00:00";
  std::vector<double> step(kLeads), valid(kLeads), member(members);
  for (std::size_t l = 0; l < step.size(); ++l) step[l] = valid[l] = 24.0 * static_cast<double>(l);
  for (std::size_t m = 0; m < member.size(); ++m) member[m] = static_cast<double>(m);

  write_netcdf(path, Format::Netcdf4, [&](nc::File& f) {
    f.put_att(NC_GLOBAL, "title", "Invented ensemble forecast of 500 hPa geopotential, initialised " +
                                      isohypse::to_string(init) + " 00 UTC (lead layout)");
    int d_time = f.def_dim("time", 1);
    int d_step = f.def_dim("step", step.size());
    int d_member = f.def_dim("member", member.size());
    int d_lat = f.def_dim("y", lat.size());
    int d_lon = f.def_dim("x", lon.size());
    int v_time = f.def_var("time", NC_DOUBLE, {d_time});
    put_texts(f, v_time, {{"units", units}, {"calendar", "noleap"}, {"standard_name", "forecast_reference_time"}});
    int v_step = f.def_var("step", NC_INT, {d_step});
    put_texts(f, v_step, {{"units", "hours"}, {"standard_name", "forecast_period"}});
    int v_valid = f.def_var("valid_time", NC_DOUBLE, {d_step});
    put_texts(f, v_valid, {{"units", units}, {"calendar", "noleap"}, {"standard_name", "time"}});
    int v_member = f.def_var("member", NC_INT, {d_member});
    put_texts(f, v_member, {{"standard_name", "realization"}});
    int v_lat = f.def_var("y", NC_FLOAT, {d_lat});
    put_texts(f, v_lat, {{"units", "degrees_north"}, {"standard_name", "latitude"}});
    int v_lon = f.def_var("x", NC_FLOAT, {d_lon});
    put_texts(f, v_lon, {{"units", "degrees_east"}, {"standard_name", "longitude"}});
    int v_z = f.def_var("z", NC_FLOAT, {d_time, d_step, d_member, d_lat, d_lon});
    put_texts(f, v_z, {{"units", "m2 s-2"}, {"standard_name", "geopotential"}, {"coordinates", "valid_time"}});
    f.deflate(v_z, 1);
    f.end_define();
    const double zero = 0.0;
    f.write(v_time, {0}, {1}, &zero);
    f.write_all(v_step, step);
    f.write_all(v_valid, valid);
    f.write_all(v_member, member);
    f.write_all(v_lat, lat);
    f.write_all(v_lon, lon);
    f.write(v_z, {0, 0, 0, 0, 0}, {1, step.size(), member.size(), lat.size(), lon.size()}, values.data());
  });
}

void write_patterns(const World& world, double step, const std::string& path) {
  const std::vector<double> lat = axis(20.0, 80.0, step), lon = axis(170.0, 320.0, step);
  const Points points = Points::product(lat, lon);
  std::vector<double> patterns, drift;
  std::string names;
  for (int r = 0; r < world.n_regimes(); ++r) {
    for (std::size_t p = 0; p < points.size(); ++p) patterns.push_back(world.regime_anomaly(r, points.lat[p], points.lon[p]));
    names += (names.empty() ? "" : "; ") + world.regimes()[static_cast<std::size_t>(r)].name;
  }
  for (std::size_t p = 0; p < points.size(); ++p) drift.push_back(world.drift().value(points.lat[p], points.lon[p]));
  std::vector<double> index(world.regimes().size());
  for (std::size_t r = 0; r < index.size(); ++r) index[r] = static_cast<double>(r);

  write_netcdf(path, Format::Netcdf4, [&](nc::File& f) {
    f.put_att(NC_GLOBAL, "title", "Planted regime patterns and model drift pattern (truth of the demo world)");
    // A noise-only world has no regime (a dimension of length 0 would be unlimited).
    const bool planted = !index.empty();
    if (!planted) f.put_att(NC_GLOBAL, "comment", "noise-only world: no regime planted");
    int d_regime = planted ? f.def_dim("regime", index.size()) : -1;
    int d_lat = f.def_dim("latitude", lat.size());
    int d_lon = f.def_dim("longitude", lon.size());
    int v_regime = planted ? f.def_var("regime", NC_INT, {d_regime}) : -1;
    if (planted) f.put_att(v_regime, "names", names);
    int v_lat = def_latitude(f, d_lat);
    int v_lon = def_longitude(f, d_lon);
    int v_pattern = planted ? f.def_var("pattern", NC_FLOAT, {d_regime, d_lat, d_lon}) : -1;
    if (planted)
      put_texts(f, v_pattern,
                {{"units", "m"},
                 {"long_name", "planted regime anomaly pattern (full cold-season amplitude; zero stationary mean)"},
                 {"names", names}});
    int v_drift = f.def_var("drift", NC_FLOAT, {d_lat, d_lon});
    put_texts(f, v_drift, {{"units", "m"}, {"long_name", "model drift pattern D at long leads (lead dependence in truth.json)"}});
    f.end_define();
    if (planted) f.write_all(v_regime, index);
    f.write_all(v_lat, lat);
    f.write_all(v_lon, lon);
    if (planted) f.write_all(v_pattern, patterns);
    f.write_all(v_drift, drift);
  });
}

}  // namespace demo
