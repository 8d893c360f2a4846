#include "isohypse/numerics/regime_model.hpp"

#include <cmath>
#include <cstdio>
#include <limits>
#include <sstream>

#include "isohypse/base/error.hpp"
#include "isohypse/base/vocabulary.hpp"

namespace isohypse {


nlohmann::json regime_json(const RegimeInfo& r) {
  return {{"id", r.id},
          {"name", r.name},
          {"frequency", r.frequency},
          {"mean_run_days", r.mean_run},
          {"median_run_days", r.median_run},
          {"longest_run_days", r.longest_run},
          {"episodes_5_days_or_more", r.episodes},
          {"residence_days", number_or_null(r.residence_days)}};
}

RegimeInfo regime_from_json(const nlohmann::json& j) {
  // Models written before the keys were unified say mean_run, median_run,
  // longest_run and episodes.
  auto key = [&](const char* now, const char* before) -> const nlohmann::json& {
    return j.contains(now) ? j.at(now) : j.at(before);
  };
  RegimeInfo r;
  r.id = j.at("id");
  r.name = j.at("name");
  r.frequency = j.at("frequency");
  r.mean_run = key("mean_run_days", "mean_run");
  r.median_run = key("median_run_days", "median_run");
  r.longest_run = key("longest_run_days", "longest_run");
  r.episodes = key("episodes_5_days_or_more", "episodes");
  const auto& res = j.at("residence_days");
  r.residence_days = res.is_null() ? arma::datum::inf : res.get<double>();
  return r;
}

nlohmann::json k_table_json(const std::vector<RegimeCountEntry>& table) {
  // Surrogate values in float precision: 7 digits say all they can, and
  // the table stays a few kilobytes in the model's attribute.
  auto floats = [](const std::vector<double>& v) {
    nlohmann::json a = nlohmann::json::array();
    for (double x : v) a.push_back(number_or_null(static_cast<float>(x)));
    return a;
  };
  nlohmann::json rows = nlohmann::json::array();
  for (const auto& e : table)
    rows.push_back({{"k", e.k},
                    {"classifiability", e.index},
                    {"classifiability_spread", number_or_null(e.index_spread)},
                    {"variance_ratio", number_or_null(e.variance_ratio)},
                    {"surrogates", e.surrogates()},
                    {"surrogate_level", number_or_null(e.surrogate_level)},
                    {"surrogate_classifiability", floats(e.surrogate_index)},
                    {"surrogate_variance_ratio", floats(e.surrogate_ratio)},
                    {"p_classifiability", number_or_null(e.p_index)},
                    {"p_variance_ratio", number_or_null(e.p_ratio)},
                    {"gap", number_or_null(e.gap)},
                    {"gap_spread", number_or_null(e.gap_spread)},
                    {"stopped_early", e.stopped_early},
                    {"holm_level", number_or_null(e.holm_level)},
                    {"significant", e.significant}});
  return rows;
}

std::vector<RegimeCountEntry> k_table_from_json(const nlohmann::json& j) {
  const double nan = arma::datum::nan;
  auto number = [&](const nlohmann::json& e, const char* key) {
    return e.contains(key) && e.at(key).is_number() ? e.at(key).get<double>() : nan;
  };
  auto numbers = [&](const nlohmann::json& e, const char* key) {
    std::vector<double> v;
    if (e.contains(key))
      for (const auto& x : e.at(key)) v.push_back(x.is_number() ? x.get<double>() : nan);
    return v;
  };
  std::vector<RegimeCountEntry> table;
  for (const auto& e : j) {
    RegimeCountEntry r;
    r.k = e.at("k");
    r.index = e.contains("classifiability") ? e.at("classifiability") : e.at("index");
    r.index_spread = number(e, "classifiability_spread");
    r.variance_ratio = number(e, "variance_ratio");
    r.surrogate_level = number(e, "surrogate_level");
    r.surrogate_index = numbers(e, "surrogate_classifiability");
    r.surrogate_ratio = numbers(e, "surrogate_variance_ratio");
    r.p_index = number(e, "p_classifiability");
    r.p_ratio = number(e, "p_variance_ratio");
    r.gap = number(e, "gap");
    r.gap_spread = number(e, "gap_spread");
    r.stopped_early = e.value("stopped_early", false);
    r.holm_level = number(e, "holm_level");
    r.significant = e.at("significant");
    table.push_back(std::move(r));
  }
  return table;
}

nlohmann::json matrix_json(const arma::mat& m) {
  nlohmann::json rows = nlohmann::json::array();
  for (arma::uword i = 0; i < m.n_rows; ++i) {
    nlohmann::json row = nlohmann::json::array();
    for (arma::uword c = 0; c < m.n_cols; ++c) row.push_back(number_or_null(m(i, c)));
    rows.push_back(std::move(row));
  }
  return rows;
}

nlohmann::json transition_json(const std::vector<std::string>& states, const arma::mat& probabilities,
                               const arma::mat& counts) {
  nlohmann::json j = {{"states", states}, {"probabilities", matrix_json(probabilities)}};
  if (!counts.is_empty()) j["counts"] = matrix_json(counts);
  return j;
}

std::vector<std::string> model_states(const RegimeModel& model) {
  std::vector<std::string> ids;
  for (const auto& r : model.regimes) ids.push_back(r.id);
  return state_list(ids);
}

const char* no_regime_rule_name(NoRegimeRule rule) {
  return rule == NoRegimeRule::FullField ? "full_field_area_weighted" : "eof_space";
}

std::optional<NoRegimeRule> no_regime_rule_from_name(const std::string& name) {
  for (NoRegimeRule r : {NoRegimeRule::FullField, NoRegimeRule::EofSpace})
    if (name == no_regime_rule_name(r)) return r;
  return std::nullopt;
}

void assign_regimes(const RegimeModel& model, const arma::mat& pcs, const arma::vec& field_norms,
                    std::vector<int>& labels, arma::vec& correlation) {
  const arma::mat& centroids = model.centroids;
  const bool full_field = model.no_regime_rule == NoRegimeRule::FullField;
  if (pcs.n_cols != centroids.n_rows)
    throw InternalError("assign_regimes: " + std::to_string(pcs.n_cols) + " components per day but centroids have " +
                     std::to_string(centroids.n_rows));
  if (full_field && field_norms.n_elem != pcs.n_rows)
    throw InternalError("assign_regimes: " + std::to_string(field_norms.n_elem) + " field norms for " +
                        std::to_string(pcs.n_rows) + " days");
  // Plain loops: no temporaries per day (classify labels thousands of member-days).
  const arma::uword n = pcs.n_rows, k = centroids.n_cols, ne = centroids.n_rows;
  labels.assign(n, -1);
  correlation.set_size(n);
  std::vector<double> cnorm(k);
  for (arma::uword j = 0; j < k; ++j) {
    double s = 0;
    for (arma::uword e = 0; e < ne; ++e) s += centroids(e, j) * centroids(e, j);
    cnorm[j] = std::sqrt(s);
  }
  for (arma::uword i = 0; i < n; ++i) {
    double best = std::numeric_limits<double>::infinity(), xx = 0;
    arma::uword bj = 0;
    for (arma::uword e = 0; e < ne; ++e) xx += pcs(i, e) * pcs(i, e);
    for (arma::uword j = 0; j < k; ++j) {
      double d = 0;
      for (arma::uword e = 0; e < ne; ++e) {
        const double diff = pcs(i, e) - centroids(e, j);
        d += diff * diff;
      }
      if (d < best) {
        best = d;
        bj = j;
      }
    }
    double dot = 0;
    for (arma::uword e = 0; e < ne; ++e) dot += pcs(i, e) * centroids(e, bj);
    // The pattern E c has norm |c| over the grid (E orthonormal), and y . E c
    // = pc . c: only the day's own norm differs between the two rules.
    const double xn = full_field ? field_norms(i) : std::sqrt(xx);
    const double c = (xn > 0 && cnorm[bj] > 0) ? dot / (xn * cnorm[bj]) : 0.0;
    correlation(i) = c;
    labels[i] = c >= model.no_regime_threshold ? static_cast<int>(bj) : -1;
  }
}

namespace {
std::string lat_text(double lat) {
  char b[16];
  std::snprintf(b, sizeof b, "%.0f%s", std::abs(lat), lat >= 0 ? "N" : "S");
  return b;
}
std::string lon_text(double lon) {
  double l = std::fmod(lon, 360.0);
  if (l > 180) l -= 360;
  if (l <= -180) l += 360;
  char b[16];
  if (std::abs(l) < 0.5 || std::abs(std::abs(l) - 180) < 0.5) std::snprintf(b, sizeof b, "%.0f", std::abs(l));
  else std::snprintf(b, sizeof b, "%.0f%s", std::abs(l), l > 0 ? "E" : "W");
  return b;
}
std::string centre_text(const arma::vec& p, const Grid& g, arma::uword i) {
  double v = p(i);
  char amp[32];
  std::snprintf(amp, sizeof amp, "%+.0f m", v);
  return std::string(v >= 0 ? "ridge " : "trough ") + lat_text(g.lat(i / g.n_lon())) + " " +
         lon_text(g.lon(i % g.n_lon())) + " " + amp;
}
}  // namespace

std::string describe_pattern(const arma::vec& p, const Grid& g) {
  arma::uword imax = p.index_max(), imin = p.index_min();
  arma::uword first = std::abs(p(imax)) >= std::abs(p(imin)) ? imax : imin;
  arma::uword second = first == imax ? imin : imax;
  std::string name = centre_text(p, g, first);
  if (std::abs(p(second)) >= 0.5 * std::abs(p(first))) name += " / " + centre_text(p, g, second);
  return name;
}

}  // namespace isohypse
