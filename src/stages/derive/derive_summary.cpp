#include "isohypse/stages/derive_summary.hpp"

#include <cmath>
#include <cstdio>
#include <sstream>

namespace isohypse {

namespace {

using json = nlohmann::json;

// A p-value with 3 decimals, ">=" before it when it is a lower bound, "-"
// when unknown (older models).
std::string p_text(double p, bool lower_bound) {
  if (!std::isfinite(p)) return "-";
  char s[32];
  std::snprintf(s, sizeof s, "%s%.3f", lower_bound ? ">=" : "", p);
  return s;
}

std::string number_text(double v, const char* format) {
  if (!std::isfinite(v)) return "-";
  char s[32];
  std::snprintf(s, sizeof s, format, v);
  return s;
}

}  // namespace

std::string regime_count_text(const std::vector<RegimeCountRow>& table, int k_used) {
  std::ostringstream o;
  o << "  k  classifiability (spread)  surrogate level  variance ratio  surrogates  p index  p ratio"
       "  Holm level   gap (spread)  significant\n";
  char line[256];
  for (const auto& e : table) {
    const std::string drawn = e.surrogates() == 0 ? "-"  // a model written before the p-values
                                                  : std::to_string(e.surrogates()) + (e.stopped_early ? " stopped" : "");
    std::snprintf(line, sizeof line, "%3d  %15.3f (%s)  %15s  %14s  %-10s  %7s  %7s  %10s  %6s (%s)  %s%s\n", e.k,
                  e.index, number_text(e.index_spread, "%.3f").c_str(), number_text(e.surrogate_level, "%.3f").c_str(),
                  number_text(e.variance_ratio, "%.3f").c_str(), drawn.c_str(),
                  p_text(e.p_index, e.stopped_early).c_str(), p_text(e.p_ratio, e.stopped_early).c_str(),
                  number_text(e.holm_level, "%.4f").c_str(), number_text(e.gap, "%.3f").c_str(),
                  number_text(e.gap_spread, "%.3f").c_str(), e.significant ? "yes" : "no",
                  e.k == k_used ? "   <- used" : "");
    o << line;
  }
  o << "(surrogate level: the significance quantile of the surrogates' indices; p: Monte Carlo p-values, \">=\" a\n"
       " lower bound where a k stopped early; significant: p ratio within Holm's level and p index within\n"
       " 1 - significance; gap: the variance reduction beyond red noise, which ranks k of tied index)\n";
  return o.str();
}

json model_summary(const RegimeModel& m) {
  json j;
  j["format_version"] = m.format_version;
  j["domain"] = m.domain.to_string();
  j["grid"] = {{"n_lat", m.grid.n_lat()}, {"n_lon", m.grid.n_lon()}};
  j["season_months"] = m.months;
  j["record"] = m.provenance.value("record", json::object());
  json eofs = json::array();
  double cum = 0;
  for (arma::uword i = 0; i < m.eigenvalues.n_elem; ++i) {
    cum += m.explained(i);
    eofs.push_back({{"eof", i + 1}, {"eigenvalue", m.eigenvalues(i)}, {"explained", m.explained(i)},
                    {"cumulative", cum}, {"north_error", m.north_error(i)}, {"effective_n", m.effective_n(i)},
                    {"explained_error", m.north_error(i) / m.total_variance}});
  }
  j["eofs"] = eofs;
  j["regime_count_table"] = k_table_json(m.k_table);
  j["regime_count_reason"] = m.k_reason;
  j["partition_agreement"] = number_or_null(m.partition_agreement);
  j["k"] = m.k();
  j["k_automatic"] = m.k_automatic;
  json regs = json::array();
  for (const auto& ri : m.regimes) regs.push_back(regime_json(ri));
  j["regimes"] = regs;
  std::size_t season_days = 0, none = 0;
  for (std::size_t t = 0; t < m.labels.size(); ++t)
    if (m.in_season[t]) {
      ++season_days;
      none += m.labels[t] < 0;
    }
  j["no_regime_frequency"] = season_days ? double(none) / double(season_days) : 0.0;
  j["no_regime_threshold"] = m.no_regime_threshold;
  j["no_regime_correlation"] = no_regime_rule_name(m.no_regime_rule);
  j["transitions"] = transition_json(model_states(m), m.transition, arma::conv_to<arma::mat>::from(m.transition_counts));
  j["provenance"] = m.provenance;
  return j;
}

std::string summary_text(const RegimeModel& m) {
  std::ostringstream o;
  char line[256];
  const json& rec = m.provenance.value("record", json::object());
  o << "Regime model over " << m.domain.to_string() << " (" << m.grid.n_lat() << " x " << m.grid.n_lon()
    << " points), season months " << json(m.months).dump() << "\n";
  if (!rec.empty())
    o << "Record " << rec.value("first", "") << " to " << rec.value("last", "") << ": " << rec.value("days", 0)
      << " days, " << rec.value("season_days", 0) << " in season\n";
  o << "\nEOF  explained  cumulative  North error (+-, % of variance)  effective N\n";
  double cum = 0;
  for (arma::uword i = 0; i < m.eigenvalues.n_elem; ++i) {
    cum += m.explained(i);
    std::snprintf(line, sizeof line, "%3llu  %8.2f%%  %9.2f%%  %8.2f%%                         %8.0f\n",
                  static_cast<unsigned long long>(i + 1), 100 * m.explained(i), 100 * cum,
                  100 * m.north_error(i) / m.total_variance, m.effective_n(i));
    o << line;
  }
  o << "\n" << regime_count_text(m.k_table, m.k());
  o << "\nk = " << m.k() << (m.k_automatic ? " (chosen from the table)" : " (as configured)") << "\n";
  if (!m.k_reason.empty()) o << m.k_reason << "\n";
  if (std::isfinite(m.partition_agreement)) {
    std::snprintf(line, sizeof line,
                  "Kept partition (least inertia of the final restarts) against the classifiability runs' most "
                  "agreeing one: A = %.3f\n", m.partition_agreement);
    o << line;
  }
  o << "\n";
  o << "id   frequency  mean run  longest  episodes>=5d  residence  name\n";
  for (const auto& r : m.regimes) {
    std::snprintf(line, sizeof line, "%-4s %8.1f%%  %6.1f d  %5d d  %12d  %7.1f d  %s\n", r.id.c_str(),
                  100 * r.frequency, r.mean_run, r.longest_run, r.episodes, r.residence_days, r.name.c_str());
    o << line;
  }
  json s = model_summary(m);
  std::snprintf(line, sizeof line, "no regime: %.1f%% of in-season days (anomaly correlation below %.2f, %s)\n",
                100 * s["no_regime_frequency"].get<double>(), m.no_regime_threshold,
                m.no_regime_rule == NoRegimeRule::FullField ? "over the full weighted field"
                                                            : "in EOF space, the rule of format version 1 models; "
                                                              "derive again for the full-field rule");
  o << line << "\nTransition probabilities (row: from, column: to)\n      ";
  for (const auto& r : m.regimes) {
    std::snprintf(line, sizeof line, "%7s", r.id.c_str());
    o << line;
  }
  o << "   none\n";
  for (arma::uword i = 0; i < m.transition.n_rows; ++i) {
    std::snprintf(line, sizeof line, "%-6s", i < m.regimes.size() ? m.regimes[i].id.c_str() : "none");
    o << line;
    for (arma::uword c = 0; c < m.transition.n_cols; ++c) {
      std::snprintf(line, sizeof line, "%7.3f", m.transition(i, c));
      o << line;
    }
    o << "\n";
  }
  return o.str();
}

}  // namespace isohypse
