// The regime model's NetCDF-4 file (format described in regime_model_file.hpp).
#include "isohypse/io/regime_model_file.hpp"

#include <cmath>
#include <cstdio>
#include <limits>
#include <sstream>

#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/sha256.hpp"
#include "io/netcdf_file.hpp"

namespace isohypse {

namespace {

using Sizes = std::vector<std::size_t>;

std::vector<double> to_std(const arma::mat& m) {  // row-major for netCDF (slowest dim first)
  arma::mat t = m.t();
  return std::vector<double>(t.begin(), t.end());
}

// Writes a matrix whose rows are the slowest netCDF dimension.
void put_rows(nc::File& f, int var, const arma::mat& m) {
  std::vector<double> v = to_std(m);
  f.write_all(var, v);
}

arma::mat get_rows(const nc::File& f, const std::string& name, arma::uword rows, arma::uword cols) {
  auto v = f.find_var(name);
  if (!v) throw DataError(f.path() + ": not a regime model: variable '" + name + "' is missing");
  std::vector<double> d = f.read_all(v->id);
  if (d.size() != rows * cols)
    throw DataError(f.path() + ": variable '" + name + "' has " + std::to_string(d.size()) + " values, expected " +
                    std::to_string(rows * cols));
  arma::mat t(d.data(), cols, rows);
  return t.t();
}

arma::vec get_vec(const nc::File& f, const std::string& name) {
  auto v = f.find_var(name);
  if (!v) throw DataError(f.path() + ": not a regime model: variable '" + name + "' is missing");
  return arma::vec(f.read_all(v->id));
}

std::string att_text(const nc::File& f, const std::string& name) {
  auto t = f.text_att(NC_GLOBAL, name);
  if (!t) throw DataError(f.path() + ": not a regime model: global attribute '" + name + "' is missing");
  return *t;
}

double att_num(const nc::File& f, const std::string& name) {
  auto v = f.num_att(NC_GLOBAL, name);
  if (!v || v->empty()) throw DataError(f.path() + ": not a regime model: global attribute '" + name + "' is missing");
  return (*v)[0];
}

}  // namespace

void write_regime_model(const RegimeModel& m, const std::string& path) {
  AtomicFile out(path);
  {
    nc::File f = nc::File::create(out.temp_path());
    const std::size_t nlat = m.grid.n_lat(), nlon = m.grid.n_lon(), ne = m.eofs.n_cols, k = m.centroids.n_cols;
    int d_lat = f.def_dim("lat", nlat), d_lon = f.def_dim("lon", nlon);
    int d_coef = f.def_dim("coef", m.climatology.coefficients.n_cols);
    int d_eof = f.def_dim("eof", ne), d_reg = f.def_dim("regime", k), d_state = f.def_dim("state", k + 1);
    int d_day = f.def_dim("day", m.dates.size());

    auto var = [&](const char* name, nc_type t, std::vector<int> dims, const char* long_name, const char* units) {
      int v = f.def_var(name, t, dims);
      if (long_name) f.put_att(v, "long_name", long_name);
      if (units) f.put_att(v, "units", units);
      if (dims.size() >= 2) f.deflate(v, 1);
      return v;
    };
    int v_lat = var("lat", NC_DOUBLE, {d_lat}, "latitude", "degrees_north");
    f.put_att(v_lat, "standard_name", "latitude");
    int v_lon = var("lon", NC_DOUBLE, {d_lon}, "longitude (contiguous across the domain)", "degrees_east");
    f.put_att(v_lon, "standard_name", "longitude");
    int v_w = var("weight", NC_DOUBLE, {d_lat, d_lon}, "sqrt(cos(latitude)) area weight", "1");
    int v_clim = var("climatology_coefficient", NC_DOUBLE, {d_coef, d_lat, d_lon},
                     "least-squares coefficients: mean, cos/sin of annual harmonics 1..H, [trend per day]", "m");
    int v_mean = var("eof_mean", NC_DOUBLE, {d_lat, d_lon}, "weighted anomaly mean removed before the EOFs", "m");
    int v_eof = var("eof", NC_DOUBLE, {d_eof, d_lat, d_lon}, "empirical orthogonal functions of weighted anomalies (unit norm)", "1");
    int v_ev = var("eigenvalue", NC_DOUBLE, {d_eof}, "EOF eigenvalue (variance of the principal component)", "m2");
    int v_ex = var("explained_fraction", NC_DOUBLE, {d_eof}, "fraction of the total weighted variance", "1");
    int v_ne = var("north_error", NC_DOUBLE, {d_eof}, "North et al. (1982) sampling error of the eigenvalue", "m2");
    int v_en = var("effective_sample_size", NC_DOUBLE, {d_eof}, "effective sample size of the principal component", "1");
    int v_cen = var("centroid", NC_DOUBLE, {d_reg, d_eof}, "regime centroid in principal-component space", "m");
    int v_pat = var("pattern", NC_DOUBLE, {d_reg, d_lat, d_lon}, "regime composite 500 hPa height anomaly", "m");
    int v_freq = var("frequency", NC_DOUBLE, {d_reg}, "fraction of in-season days in the regime", "1");
    int v_time = var("time", NC_INT, {d_day}, "day of the record", nullptr);
    const std::string time_units = "days since " + to_string(m.dates.front());
    f.put_att(v_time, "units", time_units);
    f.put_att(v_time, "calendar", calendar_name(m.calendar));
    f.put_att(v_time, "standard_name", "time");
    int v_lab = var("label", NC_INT, {d_day}, "regime index 0..k-1, -1 = no regime", "1");
    int v_in = var("in_season", NC_BYTE, {d_day}, "1 when the day is in the season of the regime analysis", "1");
    int v_cor = var("correlation", NC_DOUBLE, {d_day}, "anomaly correlation with the nearest centroid", "1");
    int v_tr = var("transition", NC_DOUBLE, {d_state, d_state}, "Markov transition probabilities, last state = no regime", "1");
    int v_tc = var("transition_count", NC_INT, {d_state, d_state}, "transition counts between consecutive in-season days", "1");

    f.put_att(NC_GLOBAL, "title", "isohypse regime model");
    f.put_att(NC_GLOBAL, "Conventions", "CF-1.10");
    f.put_att(NC_GLOBAL, "isohypse_format_version", NC_INT, {double(m.format_version)});
    f.put_att(NC_GLOBAL, "domain", m.domain.to_string());
    f.put_att(NC_GLOBAL, "variable", m.variable);
    f.put_att(NC_GLOBAL, "calendar", calendar_name(m.calendar));
    std::vector<double> months(m.months.begin(), m.months.end());
    f.put_att(NC_GLOBAL, "season_months", NC_INT, months);
    f.put_att(NC_GLOBAL, "climatology_harmonics", NC_INT, {double(m.climatology.harmonics)});
    f.put_att(NC_GLOBAL, "climatology_detrend", NC_INT, {m.climatology.detrend ? 1.0 : 0.0});
    f.put_att(NC_GLOBAL, "climatology_trend_origin", to_string(m.climatology.trend_origin));
    f.put_att(NC_GLOBAL, "running_mean_days", NC_INT, {double(m.running_mean_days)});
    f.put_att(NC_GLOBAL, "no_regime_threshold", NC_DOUBLE, {m.no_regime_threshold});
    f.put_att(NC_GLOBAL, "total_variance", NC_DOUBLE, {m.total_variance});
    f.put_att(NC_GLOBAL, "inertia", NC_DOUBLE, {m.inertia});
    f.put_att(NC_GLOBAL, "k_automatic", NC_INT, {m.k_automatic ? 1.0 : 0.0});
    nlohmann::json regimes = nlohmann::json::array();
    for (const auto& r : m.regimes) regimes.push_back(regime_json(r));
    nlohmann::json kt = k_table_json(m.k_table);
    f.put_att(NC_GLOBAL, "regimes", regimes.dump());
    f.put_att(NC_GLOBAL, "regime_count_table", kt.dump());
    f.put_att(NC_GLOBAL, "config", m.config.dump());
    f.put_att(NC_GLOBAL, "provenance", m.provenance.dump());
    f.end_define();

    f.write_all(v_lat, arma::conv_to<std::vector<double>>::from(m.grid.lat));
    f.write_all(v_lon, arma::conv_to<std::vector<double>>::from(m.grid.lon));
    f.write_all(v_w, arma::conv_to<std::vector<double>>::from(m.weights));
    put_rows(f, v_clim, m.climatology.coefficients.t());
    f.write_all(v_mean, arma::conv_to<std::vector<double>>::from(m.eof_mean));
    put_rows(f, v_eof, m.eofs.t());
    f.write_all(v_ev, arma::conv_to<std::vector<double>>::from(m.eigenvalues));
    f.write_all(v_ex, arma::conv_to<std::vector<double>>::from(m.explained));
    f.write_all(v_ne, arma::conv_to<std::vector<double>>::from(m.north_error));
    f.write_all(v_en, arma::conv_to<std::vector<double>>::from(m.effective_n));
    put_rows(f, v_cen, m.centroids.t());
    put_rows(f, v_pat, m.patterns.t());
    std::vector<double> freq;
    for (const auto& r : m.regimes) freq.push_back(r.frequency);
    f.write_all(v_freq, freq);
    std::vector<double> t, lab, ins, cor;
    for (std::size_t i = 0; i < m.dates.size(); ++i) {
      t.push_back(double(days_between(m.dates.front(), m.dates[i])));
      lab.push_back(m.labels[i]);
      ins.push_back(m.in_season[i]);
      cor.push_back(m.correlation(i));
    }
    f.write_all(v_time, t);
    f.write_all(v_lab, lab);
    f.write_all(v_in, ins);
    f.write_all(v_cor, cor);
    put_rows(f, v_tr, m.transition);
    put_rows(f, v_tc, arma::conv_to<arma::mat>::from(m.transition_counts));
    f.close();
  }
  out.commit();
}

bool is_regime_model(const std::string& path) {
  try {
    nc::File f = nc::File::open(path);
    auto version = f.num_att(NC_GLOBAL, "isohypse_format_version");
    return version && !version->empty();
  } catch (const std::exception&) {
    return false;
  }
}

RegimeModel read_regime_model(const std::string& path) {
  nc::File f = nc::File::open(path);
  RegimeModel m;
  m.path = path;
  auto version = f.num_att(NC_GLOBAL, "isohypse_format_version");
  if (!version || version->empty())
    throw DataError(path + ": not an isohypse regime model (no isohypse_format_version attribute)");
  m.format_version = static_cast<int>((*version)[0]);
  if (m.format_version != kRegimeModelFormatVersion)
    throw DataError(path + ": regime model format version " + std::to_string(m.format_version) +
                    "; this isohypse reads version " + std::to_string(kRegimeModelFormatVersion) +
                    " (derive the model again with this version)");
  m.domain = Domain::parse(att_text(f, "domain"), path + " domain");
  m.variable = att_text(f, "variable");
  m.calendar = parse_calendar(att_text(f, "calendar"));
  if (auto mo = f.num_att(NC_GLOBAL, "season_months"))
    for (double x : *mo) m.months.push_back(static_cast<int>(x));
  m.climatology.harmonics = static_cast<int>(att_num(f, "climatology_harmonics"));
  m.climatology.detrend = att_num(f, "climatology_detrend") != 0;
  m.climatology.trend_origin = parse_date(att_text(f, "climatology_trend_origin"), Calendar::ProlepticGregorian);
  m.running_mean_days = static_cast<int>(att_num(f, "running_mean_days"));
  m.no_regime_threshold = att_num(f, "no_regime_threshold");
  m.total_variance = att_num(f, "total_variance");
  m.inertia = att_num(f, "inertia");
  m.k_automatic = att_num(f, "k_automatic") != 0;
  try {
    m.config = nlohmann::json::parse(att_text(f, "config"));
    m.provenance = nlohmann::json::parse(att_text(f, "provenance"));
    for (const auto& r : nlohmann::json::parse(att_text(f, "regimes"))) m.regimes.push_back(regime_from_json(r));
    m.k_table = k_table_from_json(nlohmann::json::parse(att_text(f, "regime_count_table")));
  } catch (const nlohmann::json::exception& e) {
    throw DataError(path + ": damaged metadata in the regime model: " + e.what());
  }
  m.grid.lat = get_vec(f, "lat");
  m.grid.lon = get_vec(f, "lon");
  const arma::uword np = m.grid.n_points();
  m.weights = get_vec(f, "weight");
  const arma::uword ncoef = f.find_dim("coef")->length, ne = f.find_dim("eof")->length,
                    k = f.find_dim("regime")->length, nd = f.find_dim("day")->length;
  m.climatology.coefficients = get_rows(f, "climatology_coefficient", ncoef, np).t();
  m.eof_mean = get_vec(f, "eof_mean");
  m.eofs = get_rows(f, "eof", ne, np).t();
  m.eigenvalues = get_vec(f, "eigenvalue");
  m.explained = get_vec(f, "explained_fraction");
  m.north_error = get_vec(f, "north_error");
  m.effective_n = get_vec(f, "effective_sample_size");
  m.centroids = get_rows(f, "centroid", k, ne).t();
  m.patterns = get_rows(f, "pattern", k, np).t();
  auto tv = f.find_var("time");
  if (!tv) throw DataError(path + ": not a regime model: variable 'time' is missing");
  TimeUnits tu = parse_time_units(f.text_att(tv->id, "units").value_or(""), m.calendar);
  for (double x : f.read_all(tv->id)) m.dates.push_back(decode_time(x, tu).date);
  for (double x : get_vec(f, "label")) m.labels.push_back(static_cast<int>(x));
  for (double x : get_vec(f, "in_season")) m.in_season.push_back(x != 0);
  m.correlation = get_vec(f, "correlation");
  m.transition = get_rows(f, "transition", k + 1, k + 1);
  m.transition_counts = arma::conv_to<arma::umat>::from(get_rows(f, "transition_count", k + 1, k + 1));
  if (m.weights.n_elem != np || m.dates.size() != nd || m.regimes.size() != k)
    throw DataError(path + ": inconsistent sizes in the regime model");
  f.close();
  m.sha256 = sha256_file(path);
  return m;
}

}  // namespace isohypse
