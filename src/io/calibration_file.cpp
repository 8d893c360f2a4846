#include "isohypse/io/calibration_file.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <map>
#include <sstream>

#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/sha256.hpp"
#include "io/netcdf_file.hpp"

namespace isohypse {

namespace {

constexpr const char* kVersionAttribute = "isohypse_calibration_format_version";

// One variable: dims by name, values in C order.
struct Column {
  std::string name;
  std::vector<std::string> dims;
  const char* long_name;
  const char* units;
  std::vector<double> values;
};

// The per-window scores as named columns (the same list writes and reads them).
std::vector<std::pair<std::string, double CalibrationScores::*>> score_members() {
  return {{"brier_raw", &CalibrationScores::brier_raw},
          {"brier_calibrated", &CalibrationScores::brier_calibrated},
          {"brier_climatology", &CalibrationScores::brier_climatology},
          {"skill_raw", &CalibrationScores::skill_raw},
          {"skill_calibrated", &CalibrationScores::skill_calibrated},
          {"reliability_raw", &CalibrationScores::reliability_raw},
          {"reliability_calibrated", &CalibrationScores::reliability_calibrated},
          {"resolution_raw", &CalibrationScores::resolution_raw},
          {"resolution_calibrated", &CalibrationScores::resolution_calibrated},
          {"hit_rate_raw", &CalibrationScores::hit_rate_raw},
          {"hit_rate_calibrated", &CalibrationScores::hit_rate_calibrated},
          {"departure_raw", &CalibrationScores::departure_raw},
          {"departure_calibrated", &CalibrationScores::departure_calibrated}};
}

std::string score_long_name(const std::string& name) {
  if (name.rfind("brier", 0) == 0) return "mean multi-category Brier score, cross-validated";
  if (name.rfind("skill", 0) == 0) return "multi-category Brier skill against the monthly climatology, cross-validated";
  if (name.rfind("reliability", 0) == 0) return "binned reliability term (10 bins) summed over the states, cross-validated";
  if (name.rfind("resolution", 0) == 0) return "binned resolution term (10 bins) summed over the states, cross-validated";
  if (name.rfind("departure", 0) == 0)
    return "largest |probability - climatological frequency| of any state and case, cross-validated";
  return "share of cases whose most likely state was observed, cross-validated";
}

std::string join(const std::vector<std::string>& v, const std::string& sep) {
  std::string s;
  for (std::size_t i = 0; i < v.size(); ++i) s += (i ? sep : "") + v[i];
  return s;
}

std::vector<std::string> split(const std::string& s, char sep) {
  std::vector<std::string> out;
  std::stringstream in(s);
  for (std::string item; std::getline(in, item, sep);)
    if (!item.empty()) out.push_back(item);
  return out;
}

std::size_t groups_per_lead(const Calibration& c) {
  return c.blend_groups.empty() ? 1 : c.blend_groups.front().size();
}

std::vector<Column> columns(const Calibration& c) {
  std::vector<Column> cols;
  std::vector<double> leads, cases, first, last, wcases;
  for (int l = 0; l < c.n_leads(); ++l) leads.push_back(l);
  for (std::size_t n : c.cases) cases.push_back(static_cast<double>(n));
  for (const auto& s : c.scores) first.push_back(s.first), last.push_back(s.last), wcases.push_back(double(s.cases));
  cols.push_back({"lead", {"lead"}, "lead day (days after the issue date)", "days", leads});
  cols.push_back({"blend_coefficient", {"lead"}, "a(L) of p_cal = c + a (p_raw - c), smoothed in lead", "1",
                  arma::conv_to<std::vector<double>>::from(c.blend)});
  cols.push_back({"blend_coefficient_unsmoothed", {"lead"}, "a(L) fitted on the lead day alone", "1",
                  arma::conv_to<std::vector<double>>::from(c.blend_unsmoothed)});
  cols.push_back({"blend_coefficient_fitted", {"lead"},
                  "the closed form over the leads pooled for a(L), before its shrinkage and clip to [0, 1]", "1",
                  arma::conv_to<std::vector<double>>::from(c.blend_fitted)});
  cols.push_back({"blend_coefficient_standard_error", {"lead"},
                  "jackknife standard error of blend_coefficient_fitted over the season years", "1",
                  arma::conv_to<std::vector<double>>::from(c.blend_standard_error)});
  cols.push_back({"cases", {"lead"}, "reforecast cases behind a(L)", "1", cases});
  std::vector<double> sums;
  for (const auto& lead : c.blend_groups)
    for (const BlendSums& g : lead)
      sums.insert(sums.end(), {g.numerator, g.denominator, g.noise, g.noise_members, double(g.cases)});
  cols.push_back({"blend_sums", {"lead", "blend_group", "blend_term"},
                  "sums behind a(L) by season year (the leads pooled for it): numerator, denominator, sampling noise "
                  "q = sum_k p_k (1 - p_k) / (m - 1), q m, cases; for refitting a(L) to another ensemble size",
                  "1", sums});
  cols.push_back({"window_first", {"window"}, "first lead day of the window", "days", first});
  cols.push_back({"window_last", {"window"}, "last lead day of the window", "days", last});
  cols.push_back({"window_cases", {"window"}, "cases scored in the window", "1", wcases});
  for (const auto& [name, member] : score_members()) {
    std::vector<double> v;
    for (const auto& s : c.scores) v.push_back(s.*member);
    cols.push_back({name, {"window"}, nullptr, "1", v});
  }
  if (c.method != CalibrationMethod::Blend) {
    std::vector<double> w, b;
    for (const auto& m : c.logistic) {
      for (arma::uword k = 0; k < m.weights.n_rows; ++k)
        for (arma::uword f = 0; f < m.weights.n_cols; ++f) w.push_back(m.weights(k, f));
      for (double x : m.intercepts) b.push_back(x);
    }
    cols.push_back({"logistic_weight", {"window", "state", "feature"},
                    "multinomial logistic weights; features: log raw probability of each state (half a member "
                    "added), then log climatological frequency of each state",
                    "1", w});
    cols.push_back({"logistic_intercept", {"window", "state"}, "multinomial logistic intercepts", "1", b});
  }
  return cols;
}

void put_globals(nc::File& f, const Calibration& c) {
  f.put_att(NC_GLOBAL, "title", "isohypse calibration of regime probabilities");
  f.put_att(NC_GLOBAL, "Conventions", "CF-1.10");
  f.put_att(NC_GLOBAL, kVersionAttribute, NC_INT, {double(kCalibrationFormatVersion)});
  f.put_att(NC_GLOBAL, "method", calibration_method_name(c.method));
  std::vector<std::string> chosen;
  for (CalibrationMethod m : c.window_methods) chosen.push_back(calibration_method_name(m));
  f.put_att(NC_GLOBAL, "window_methods", join(chosen, ","));
  f.put_att(NC_GLOBAL, "states", join(c.states, ","));
  f.put_att(NC_GLOBAL, "coefficient_smoothing_days", NC_INT, {double(c.coefficient_smoothing_days)});
  f.put_att(NC_GLOBAL, "blend_shrinkage_z", NC_DOUBLE, {c.shrinkage_z});
  f.put_att(NC_GLOBAL, "penalty_c", NC_DOUBLE, {c.penalty_c});
  f.put_att(NC_GLOBAL, "cross_validation", "leave one reforecast year out (the drift and the calibration)");
  f.put_att(NC_GLOBAL, "regime_model_file", c.model_file);
  f.put_att(NC_GLOBAL, "regime_model_sha256", c.model_sha256);
  f.put_att(NC_GLOBAL, "forecast_grid", c.forecast_grid);
  f.put_att(NC_GLOBAL, "calendar", c.calendar);
  f.put_att(NC_GLOBAL, "members_per_initialisation", NC_INT, {double(c.members_min), double(c.members_max)});
  f.put_att(NC_GLOBAL, "lagged_ensemble_members", NC_DOUBLE, {c.ensemble_members});
  f.put_att(NC_GLOBAL, "reforecast_years", NC_INT, std::vector<double>(c.years.begin(), c.years.end()));
  f.put_att(NC_GLOBAL, "reforecast_files", join(c.files, "\n"));
  f.put_att(NC_GLOBAL, "lag_days", NC_INT, {double(c.lag_days)});
  f.put_att(NC_GLOBAL, "weights", c.weights);
  f.put_att(NC_GLOBAL, "observed", c.observed);
  f.put_att(NC_GLOBAL, "unobserved_cases", NC_INT, {double(c.unobserved_cases)});
  f.put_att(NC_GLOBAL, "created", c.created);
  f.put_att(NC_GLOBAL, "tool_version", c.tool_version);
  f.put_att(NC_GLOBAL, "caution", kCaution);
}

std::string text(const nc::File& f, const std::string& name) {
  auto t = f.text_att(NC_GLOBAL, name);
  if (!t) throw DataError(f.path() + ": not an isohypse calibration file: global attribute '" + name + "' is missing");
  return *t;
}

std::vector<double> numbers(const nc::File& f, const std::string& name) {
  auto v = f.num_att(NC_GLOBAL, name);
  if (!v) throw DataError(f.path() + ": not an isohypse calibration file: global attribute '" + name + "' is missing");
  return *v;
}

std::vector<double> variable(const nc::File& f, const std::string& name, std::size_t expected) {
  auto v = f.find_var(name);
  if (!v) throw DataError(f.path() + ": the calibration file has no variable '" + name + "'");
  std::vector<double> x = f.read_all(v->id);
  if (x.size() != expected)
    throw DataError(f.path() + ": variable '" + name + "' holds " + std::to_string(x.size()) + " values, expected " +
                    std::to_string(expected));
  return x;
}

std::size_t dim_length(const nc::File& f, const std::string& name) {
  auto d = f.find_dim(name);
  if (!d) throw DataError(f.path() + ": the calibration file has no dimension '" + name + "'");
  return d->length;
}

void read_logistic(const nc::File& f, Calibration& c, std::size_t n_windows) {
  const std::size_t S = c.states.size(), F = 2 * S;
  const std::vector<double> w = variable(f, "logistic_weight", n_windows * S * F);
  const std::vector<double> b = variable(f, "logistic_intercept", n_windows * S);
  for (std::size_t i = 0; i < n_windows; ++i) {
    LogisticModel m;
    m.penalty_c = c.penalty_c;
    m.weights.set_size(S, F);
    m.intercepts.set_size(S);
    for (std::size_t k = 0; k < S; ++k) {
      for (std::size_t x = 0; x < F; ++x) m.weights(k, x) = w[(i * S + k) * F + x];
      m.intercepts(k) = b[i * S + k];
    }
    c.logistic.push_back(m);
  }
}

}  // namespace

std::string calibration_method_name(CalibrationMethod m) {
  return m == CalibrationMethod::Logistic ? "logistic" : m == CalibrationMethod::Auto ? "auto" : "blend";
}

CalibrationMethod parse_calibration_method(const std::string& text) {
  if (text == "blend") return CalibrationMethod::Blend;
  if (text == "logistic") return CalibrationMethod::Logistic;
  if (text == "auto") return CalibrationMethod::Auto;
  throw InputError("method (--method): '" + text + "' is not a calibration method; use blend, logistic or auto");
}

double Calibration::blend_for(int lead, double members) const {
  const auto l = static_cast<arma::uword>(std::clamp(lead, 0, std::max(n_leads() - 1, 0)));
  if (blend_groups.size() != blend.n_elem || blend.is_empty() || members <= 0 || !std::isfinite(blend_fitted(l)))
    return blend_at(lead);
  std::vector<BlendSums> adjusted;
  for (const BlendSums& g : blend_groups[l]) adjusted.push_back(for_ensemble(g, members));
  const double a = shrunk_blend_coefficient(adjusted, shrinkage_z).coefficient;
  return std::isfinite(a) ? a : 0.0;
}

double Calibration::blend_at(int lead) const {
  if (blend.is_empty()) return 1.0;
  return blend(static_cast<arma::uword>(std::clamp(lead, 0, n_leads() - 1)));
}

CalibrationMethod Calibration::method_at(int lead) const {
  const int w = window_of(lead);
  if (w < 0 || static_cast<std::size_t>(w) >= window_methods.size())
    return method == CalibrationMethod::Auto ? CalibrationMethod::Blend : method;
  return window_methods[static_cast<std::size_t>(w)];
}

int Calibration::window_of(int lead) const {
  int best = -1, distance = 1 << 30;
  for (std::size_t i = 0; i < windows.size(); ++i) {
    const int d = lead < windows[i].first ? windows[i].first - lead : lead > windows[i].second ? lead - windows[i].second : 0;
    if (d < distance) best = static_cast<int>(i), distance = d;
  }
  return best;
}

void write_calibration(const Calibration& c, const std::string& path) {
  AtomicFile out(path);
  {
    nc::File f = nc::File::create(out.temp_path());
    std::map<std::string, int> dims = {{"lead", f.def_dim("lead", c.blend.n_elem)},
                                       {"window", f.def_dim("window", c.scores.size())},
                                       {"state", f.def_dim("state", c.states.size())},
                                       {"feature", f.def_dim("feature", 2 * c.states.size())},
                                       {"blend_group", f.def_dim("blend_group", groups_per_lead(c))},
                                       {"blend_term", f.def_dim("blend_term", 5)}};
    const std::vector<Column> cols = columns(c);
    std::vector<int> ids;
    for (const auto& col : cols) {
      std::vector<int> d;
      for (const auto& n : col.dims) d.push_back(dims.at(n));
      const int id = f.def_var(col.name, NC_DOUBLE, d);
      f.put_att(id, "long_name", col.long_name ? std::string(col.long_name) : score_long_name(col.name));
      if (col.units) f.put_att(id, "units", col.units);
      ids.push_back(id);
    }
    put_globals(f, c);
    f.end_define();
    for (std::size_t i = 0; i < cols.size(); ++i) f.write_all(ids[i], cols[i].values);
    f.close();
  }
  out.commit();
}

bool is_calibration_file(const std::string& path) {
  try {
    nc::File f = nc::File::open(path);
    auto v = f.num_att(NC_GLOBAL, kVersionAttribute);
    return v && !v->empty();
  } catch (const std::exception&) {
    return false;
  }
}

Calibration read_calibration(const std::string& path) {
  nc::File f = nc::File::open(path);
  Calibration c;
  const auto version = f.num_att(NC_GLOBAL, kVersionAttribute);
  if (!version || version->empty())
    throw DataError(path + ": not an isohypse calibration file (no " + std::string(kVersionAttribute) +
                    "; write one with isohypse calibrate)");
  c.format_version = static_cast<int>((*version)[0]);
  if (c.format_version > kCalibrationFormatVersion)
    throw DataError(path + ": calibration format version " + std::to_string(c.format_version) +
                    " is newer than this isohypse reads (" + std::to_string(kCalibrationFormatVersion) + ")");
  c.method = parse_calibration_method(text(f, "method"));
  c.states = split(text(f, "states"), ',');
  c.coefficient_smoothing_days = static_cast<int>(numbers(f, "coefficient_smoothing_days").at(0));
  c.shrinkage_z = numbers(f, "blend_shrinkage_z").at(0);
  c.penalty_c = numbers(f, "penalty_c").at(0);
  c.model_file = text(f, "regime_model_file");
  c.model_sha256 = text(f, "regime_model_sha256");
  c.forecast_grid = text(f, "forecast_grid");
  c.calendar = text(f, "calendar");
  const std::vector<double> members = numbers(f, "members_per_initialisation");
  c.members_min = static_cast<int>(members.at(0));
  c.members_max = static_cast<int>(members.at(members.size() - 1));
  c.ensemble_members = numbers(f, "lagged_ensemble_members").at(0);
  for (double y : numbers(f, "reforecast_years")) c.years.push_back(static_cast<int>(y));
  c.files = split(text(f, "reforecast_files"), '\n');
  c.lag_days = static_cast<int>(numbers(f, "lag_days").at(0));
  c.weights = text(f, "weights");
  c.observed = text(f, "observed");
  c.unobserved_cases = static_cast<std::size_t>(numbers(f, "unobserved_cases").at(0));
  c.created = text(f, "created");
  c.tool_version = text(f, "tool_version");
  const std::size_t L = dim_length(f, "lead"), W = dim_length(f, "window");
  if (dim_length(f, "state") != c.states.size())
    throw DataError(path + ": the state dimension does not match the states attribute");
  c.blend = arma::vec(variable(f, "blend_coefficient", L));
  c.blend_unsmoothed = arma::vec(variable(f, "blend_coefficient_unsmoothed", L));
  c.blend_fitted = arma::vec(variable(f, "blend_coefficient_fitted", L));
  c.blend_standard_error = arma::vec(variable(f, "blend_coefficient_standard_error", L));
  for (double n : variable(f, "cases", L)) c.cases.push_back(static_cast<std::size_t>(n));
  const std::size_t G = dim_length(f, "blend_group");
  const std::vector<double> sums = variable(f, "blend_sums", L * G * 5);
  c.blend_groups.assign(L, std::vector<BlendSums>(G));
  for (std::size_t l = 0; l < L; ++l)
    for (std::size_t g = 0; g < G; ++g) {
      const double* t = &sums[(l * G + g) * 5];
      c.blend_groups[l][g] = {t[0], t[1], static_cast<arma::uword>(t[4]), t[2], t[3]};
    }
  const std::vector<double> first = variable(f, "window_first", W), last = variable(f, "window_last", W),
                            wcases = variable(f, "window_cases", W);
  c.scores.resize(W);
  for (std::size_t i = 0; i < W; ++i) {
    c.windows.emplace_back(static_cast<int>(first[i]), static_cast<int>(last[i]));
    c.scores[i].first = c.windows[i].first;
    c.scores[i].last = c.windows[i].second;
    c.scores[i].cases = static_cast<std::size_t>(wcases[i]);
  }
  for (const auto& [name, member] : score_members()) {
    const std::vector<double> v = variable(f, name, W);
    for (std::size_t i = 0; i < W; ++i) c.scores[i].*member = v[i];
  }
  if (c.method != CalibrationMethod::Blend) read_logistic(f, c, W);
  for (const std::string& m : split(text(f, "window_methods"), ',')) {
    c.window_methods.push_back(parse_calibration_method(m));
    if (c.window_methods.back() == CalibrationMethod::Auto ||
        (c.window_methods.back() == CalibrationMethod::Logistic && c.method == CalibrationMethod::Blend))
      throw DataError(path + ": window_methods names '" + m + "', which a " + calibration_method_name(c.method) +
                      " calibration cannot apply");
  }
  if (c.window_methods.size() != W)
    throw DataError(path + ": window_methods names " + std::to_string(c.window_methods.size()) + " methods for " +
                    std::to_string(W) + " windows");
  f.close();
  c.path = path;
  c.sha256 = sha256_file(path);
  return c;
}

}  // namespace isohypse
