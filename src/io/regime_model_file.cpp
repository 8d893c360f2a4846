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

namespace {

// One variable of the model file: its definition, attributes and values
// (row-major, slowest netCDF dimension first).
struct ModelVariable {
  const char* name;
  nc_type type;
  std::vector<int> dims;
  const char* long_name;
  const char* units;  // nullptr: none
  std::vector<double> values;
  std::vector<std::pair<std::string, std::string>> attributes = {};
};

std::vector<double> values_of(const arma::vec& v) { return arma::conv_to<std::vector<double>>::from(v); }

struct ModelDims {
  int lat, lon, coef, eof, regime, state, day;
};

ModelDims define_dims(nc::File& f, const RegimeModel& m) {
  const std::size_t k = m.centroids.n_cols;
  return {f.def_dim("lat", m.grid.n_lat()),  f.def_dim("lon", m.grid.n_lon()),
          f.def_dim("coef", m.climatology.coefficients.n_cols), f.def_dim("eof", m.eofs.n_cols),
          f.def_dim("regime", k),  f.def_dim("state", k + 1), f.def_dim("day", m.dates.size())};
}

// The grid, climatology and EOF variables.
std::vector<ModelVariable> analysis_variables(const RegimeModel& m, const ModelDims& d) {
  return {
      {"lat", NC_DOUBLE, {d.lat}, "latitude", "degrees_north", values_of(m.grid.lat), {{"standard_name", "latitude"}}},
      {"lon", NC_DOUBLE, {d.lon}, "longitude (contiguous across the domain)", "degrees_east", values_of(m.grid.lon),
       {{"standard_name", "longitude"}}},
      {"weight", NC_DOUBLE, {d.lat, d.lon}, "sqrt(cos(latitude)) area weight", "1", values_of(m.weights)},
      {"climatology_coefficient", NC_DOUBLE, {d.coef, d.lat, d.lon},
       "least-squares coefficients: mean, cos/sin of annual harmonics 1..H, [trend per day]", "m",
       to_std(m.climatology.coefficients.t())},
      {"eof_mean", NC_DOUBLE, {d.lat, d.lon}, "weighted anomaly mean removed before the EOFs", "m",
       values_of(m.eof_mean)},
      {"eof", NC_DOUBLE, {d.eof, d.lat, d.lon}, "empirical orthogonal functions of weighted anomalies (unit norm)", "1",
       to_std(m.eofs.t())},
      {"eigenvalue", NC_DOUBLE, {d.eof}, "EOF eigenvalue (variance of the principal component)", "m2",
       values_of(m.eigenvalues)},
      {"explained_fraction", NC_DOUBLE, {d.eof}, "fraction of the total weighted variance", "1",
       values_of(m.explained)},
      {"north_error", NC_DOUBLE, {d.eof}, "North et al. (1982) sampling error of the eigenvalue", "m2",
       values_of(m.north_error)},
      {"effective_sample_size", NC_DOUBLE, {d.eof}, "effective sample size of the principal component", "1",
       values_of(m.effective_n)},
  };
}

// The regimes, the labelled record and the transitions.
std::vector<ModelVariable> regime_variables(const RegimeModel& m, const ModelDims& d) {
  std::vector<double> freq, t, lab, ins, cor;
  for (const auto& r : m.regimes) freq.push_back(r.frequency);
  for (std::size_t i = 0; i < m.dates.size(); ++i) {
    t.push_back(double(days_between(m.dates.front(), m.dates[i])));
    lab.push_back(m.labels[i]);
    ins.push_back(m.in_season[i]);
    cor.push_back(m.correlation(i));
  }
  return {
      {"centroid", NC_DOUBLE, {d.regime, d.eof}, "regime centroid in principal-component space", "m",
       to_std(m.centroids.t())},
      {"pattern", NC_DOUBLE, {d.regime, d.lat, d.lon}, "regime composite 500 hPa height anomaly", "m",
       to_std(m.patterns.t())},
      {"frequency", NC_DOUBLE, {d.regime}, "fraction of in-season days in the regime", "1", freq},
      {"time", NC_INT, {d.day}, "day of the record", nullptr, t,
       {{"units", "days since " + to_string(m.dates.front())},
        {"calendar", calendar_name(m.calendar)},
        {"standard_name", "time"}}},
      {"label", NC_INT, {d.day}, "regime index 0..k-1, -1 = no regime", "1", lab},
      {"in_season", NC_BYTE, {d.day}, "1 when the day is in the season of the regime analysis", "1", ins},
      {"correlation", NC_DOUBLE, {d.day}, "anomaly correlation with the nearest centroid", "1", cor},
      {"transition", NC_DOUBLE, {d.state, d.state}, "Markov transition probabilities, last state = no regime", "1",
       to_std(m.transition)},
      {"transition_count", NC_INT, {d.state, d.state}, "transition counts between consecutive in-season days", "1",
       to_std(arma::conv_to<arma::mat>::from(m.transition_counts))},
  };
}

int define_variable(nc::File& f, const ModelVariable& v) {
  const int id = f.def_var(v.name, v.type, v.dims);
  if (v.long_name) f.put_att(id, "long_name", v.long_name);
  if (v.units) f.put_att(id, "units", v.units);
  if (v.dims.size() >= 2) f.deflate(id, 1);
  for (const auto& [name, text] : v.attributes) f.put_att(id, name, text);
  return id;
}

void put_global_attributes(nc::File& f, const RegimeModel& m) {
  f.put_att(NC_GLOBAL, "title", "isohypse regime model");
  f.put_att(NC_GLOBAL, "Conventions", "CF-1.10");
  // The current version whatever the model was read as: the file states its
  // rule in no_regime_correlation, which a version 2 reader follows.
  f.put_att(NC_GLOBAL, "isohypse_format_version", NC_INT, {double(kRegimeModelFormatVersion)});
  f.put_att(NC_GLOBAL, "domain", m.domain.to_string());
  f.put_att(NC_GLOBAL, "variable", m.variable);
  f.put_att(NC_GLOBAL, "calendar", calendar_name(m.calendar));
  f.put_att(NC_GLOBAL, "season_months", NC_INT, std::vector<double>(m.months.begin(), m.months.end()));
  f.put_att(NC_GLOBAL, "climatology_harmonics", NC_INT, {double(m.climatology.harmonics)});
  f.put_att(NC_GLOBAL, "climatology_detrend", NC_INT, {m.climatology.detrend ? 1.0 : 0.0});
  f.put_att(NC_GLOBAL, "climatology_trend_origin", to_string(m.climatology.trend_origin));
  f.put_att(NC_GLOBAL, "running_mean_days", NC_INT, {double(m.running_mean_days)});
  f.put_att(NC_GLOBAL, "no_regime_threshold", NC_DOUBLE, {m.no_regime_threshold});
  f.put_att(NC_GLOBAL, "no_regime_correlation", no_regime_rule_name(m.no_regime_rule));
  f.put_att(NC_GLOBAL, "total_variance", NC_DOUBLE, {m.total_variance});
  f.put_att(NC_GLOBAL, "inertia", NC_DOUBLE, {m.inertia});
  f.put_att(NC_GLOBAL, "k_automatic", NC_INT, {m.k_automatic ? 1.0 : 0.0});
  nlohmann::json regimes = nlohmann::json::array();
  for (const auto& r : m.regimes) regimes.push_back(regime_json(r));
  f.put_att(NC_GLOBAL, "regimes", regimes.dump());
  f.put_att(NC_GLOBAL, "regime_count_table", k_table_json(m.k_table).dump());
  if (!m.k_reason.empty()) f.put_att(NC_GLOBAL, "regime_count_reason", m.k_reason);
  if (std::isfinite(m.partition_agreement))
    f.put_att(NC_GLOBAL, "partition_agreement", NC_DOUBLE, {m.partition_agreement});
  f.put_att(NC_GLOBAL, "config", m.config.dump());
  f.put_att(NC_GLOBAL, "provenance", m.provenance.dump());
}

// Version 1 models took the no-regime correlation in EOF space and say
// nothing; they keep that rule, so their stored labels stay what their
// guidance archives were made with (inspect and the summary say so).
NoRegimeRule read_no_regime_rule(const nc::File& f, int format_version) {
  if (format_version < 2) return NoRegimeRule::EofSpace;
  const std::string name = att_text(f, "no_regime_correlation");
  const auto rule = no_regime_rule_from_name(name);
  if (!rule)
    throw DataError(f.path() + ": no_regime_correlation is '" + name + "'; expected '" +
                    no_regime_rule_name(NoRegimeRule::FullField) + "' or '" +
                    no_regime_rule_name(NoRegimeRule::EofSpace) + "'");
  return *rule;
}

}  // namespace

void write_regime_model(const RegimeModel& m, const std::string& path) {
  AtomicFile out(path);
  {
    nc::File f = nc::File::create(out.temp_path());
    const ModelDims dims = define_dims(f, m);
    std::vector<ModelVariable> vars = analysis_variables(m, dims);
    for (auto& v : regime_variables(m, dims)) vars.push_back(std::move(v));
    std::vector<int> ids;
    for (const auto& v : vars) ids.push_back(define_variable(f, v));
    put_global_attributes(f, m);
    f.end_define();
    for (std::size_t i = 0; i < vars.size(); ++i) f.write_all(ids[i], vars[i].values);
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
  if (m.format_version < 1 || m.format_version > kRegimeModelFormatVersion)
    throw DataError(path + ": regime model format version " + std::to_string(m.format_version) +
                    "; this isohypse reads versions 1 to " + std::to_string(kRegimeModelFormatVersion) +
                    " (derive the model again with this version)");
  m.no_regime_rule = read_no_regime_rule(f, m.format_version);
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
  m.k_reason = f.text_att(NC_GLOBAL, "regime_count_reason").value_or("");  // older models have none
  if (auto a = f.num_att(NC_GLOBAL, "partition_agreement"); a && !a->empty()) m.partition_agreement = (*a)[0];
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
