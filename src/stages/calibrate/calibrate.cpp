#include "isohypse/stages/calibrate.hpp"

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <sstream>

#include "base/blas_threads.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/stopwatch.hpp"
#include "stages/calibrate/calibration_cases.hpp"
#include "stages/calibrate/calibration_fit.hpp"
#include "stages/calibrate/reforecast_issues.hpp"
#include "stages/calibrate/reforecast_labels.hpp"

namespace isohypse {

namespace {

std::string grid_words(const Grid& g) {
  char s[200];
  std::snprintf(s, sizeof s, "%llu x %llu points, latitude %.2f..%.2f, longitude %.2f..%.2f",
                static_cast<unsigned long long>(g.n_lat()), static_cast<unsigned long long>(g.n_lon()), g.lat.min(),
                g.lat.max(), g.lon.min(), g.lon.max());
  return s;
}

// What the calibration was fitted on.
void fill_identity(const RegimeModel& model, const CalibrateConfig& cfg, const ReforecastSet& set,
                   const CalibrationCases& cases, const ObservedSequence& observed, Calibration& c) {
  c.states = model_states(model);
  c.model_file = std::filesystem::path(cfg.model_file.empty() ? model.path : cfg.model_file).filename().string();
  c.model_sha256 = model.sha256;
  c.forecast_grid = grid_words(set.inits.front().native_grid);
  c.calendar = calendar_name(set.inits.front().init.calendar);
  c.members_min = c.members_max = static_cast<int>(set.inits.front().members.size());
  for (const auto& in : set.inits) {
    c.members_min = std::min(c.members_min, static_cast<int>(in.members.size()));
    c.members_max = std::max(c.members_max, static_cast<int>(in.members.size()));
  }
  c.ensemble_members = arma::mean(cases.members);
  c.years = set.years;
  c.files = set.files;
  c.lag_days = set.lag_days;
  c.weights = cfg.weights.to_string();
  c.observed = cfg.observed.empty() ? "regime model record" : observed.source;
  c.unobserved_cases = cases.unobserved;
  c.created = utc_timestamp_now();
  c.tool_version = ISOHYPSE_VERSION;
}

std::string cases_table(const CalibrationCases& cs, const arma::mat& cross, const std::vector<std::string>& states) {
  std::ostringstream o;
  o.precision(17);
  o << "issue_date,valid_date,lead_days,season_year,members,observed";
  for (const char* what : {"raw_", "calibrated_", "climatology_"})
    for (const auto& s : states) o << "," << what << s;
  o << "\n";
  for (std::size_t i = 0; i < cs.lead.size(); ++i) {
    o << to_string(cs.issue[i]) << "," << to_string(add_days(cs.issue[i], cs.lead[i])) << "," << cs.lead[i] << ","
      << cs.year[i] << "," << cs.members(i) << "," << states.at(static_cast<std::size_t>(cs.observed[i]));
    for (const arma::mat* m : {&cs.p, &cross, &cs.c})
      for (arma::uword k = 0; k < m->n_cols; ++k) o << "," << (*m)(i, k);
    o << "\n";
  }
  return o.str();
}

}  // namespace

void CalibrateConfig::validate() const {
  auto bad = [](const std::string& m) { throw InputError(m); };
  if (reforecasts.empty()) bad("reforecasts (--reforecasts): no reforecast files given");
  if (lag < 1) bad("lag (--lag) must be at least 1 initialisation; found " + std::to_string(lag));
  if (lag_days < 0 || lag_days > 30) bad("lag_days (--lag-days) must lie in 0..30; found " + std::to_string(lag_days));
  if (reforecast_window_days < 0 || reforecast_window_days > 60)
    bad("reforecast_window_days (--reforecast-window) must lie in 0..60 days; found " +
        std::to_string(reforecast_window_days));
  if (lead_smoothing_days < 0 || lead_smoothing_days > 15)
    bad("lead_smoothing_days (--lead-smoothing) must lie in 0..15 days; found " + std::to_string(lead_smoothing_days));
  if (coefficient_smoothing_days < 0 || coefficient_smoothing_days > 15)
    bad("coefficient_smoothing_days (--coefficient-smoothing) must lie in 0..15 days; found " +
        std::to_string(coefficient_smoothing_days));
  if (!(shrinkage_z >= 0 && shrinkage_z <= 5))
    bad("shrinkage_z (--shrinkage) must lie in 0..5 standard errors; found " + std::to_string(shrinkage_z));
  if (!(penalty_c > 0) || !std::isfinite(penalty_c))
    bad("penalty_c (--penalty-c) must be a finite number > 0; found " + std::to_string(penalty_c));
  if (threads < 0) bad("threads (--threads) must be 0 (every core) or positive; found " + std::to_string(threads));
  if (held_fields_mb < 0)
    bad("held_fields_mb (--held-fields-memory) must be 0 or more megabytes; found " + std::to_string(held_fields_mb));
  if (windows.empty()) bad("windows (--windows): no lead windows given");
  for (const auto& [first, last] : windows)
    if (first < 0 || last < first)
      bad("windows (--windows): " + std::to_string(first) + "-" + std::to_string(last) +
          " is not a lead range FIRST-LAST with 0 <= FIRST <= LAST");
}

Calibration calibrate_reforecasts(const RegimeModel& model, const CalibrateConfig& cfg,
                                  const CalibrateProgress& progress, CalibrateTimings* timings,
                                  std::string* cases_csv) {
  cfg.validate();
  const detail::ScopedBlasThreads one_blas_thread(1);
  const CalibrateProgress report = progress ? progress : [](const std::string&, int, int) {};
  CalibrateTimings unused;
  CalibrateTimings& time = timings ? *timings : unused;
  Stopwatch clock;
  const ReforecastSet set = reforecast_set(model, cfg, report);
  const ObservedSequence observed = calibration_observed(model, cfg, set);
  check_observed_coverage(model, set, observed);
  time.scan_s = clock.lap();
  const ReforecastLabels labels = label_reforecasts(model, cfg, set, report);
  time.label_s = clock.lap();
  time.read_s = labels.read_s;
  time.decode_s = labels.decode_s;
  time.threads = labels.threads;
  const CalibrationCases cases = calibration_cases(model, set, labels, observed);
  time.cases_s = clock.lap();
  Calibration c;
  c.method = cfg.method;
  c.coefficient_smoothing_days = cfg.coefficient_smoothing_days;
  c.penalty_c = cfg.penalty_c;
  c.shrinkage_z = cfg.shrinkage_z;
  fill_identity(model, cfg, set, cases, observed, c);
  const arma::mat cross = fit_calibration(cases, set.years, cfg.windows, c, cfg.threads, report);
  if (cases_csv) *cases_csv = cases_table(cases, cross, c.states);
  time.fit_s = clock.lap();
  time.total_s = clock.total();
  return c;
}

nlohmann::json calibration_summary(const Calibration& c) {
  nlohmann::json scores = nlohmann::json::array();
  for (const auto& s : c.scores)
    scores.push_back({{"first_lead_days", s.first}, {"last_lead_days", s.last}, {"cases", s.cases},
                      {"skill_raw", number_or_null(s.skill_raw)}, {"skill_calibrated", number_or_null(s.skill_calibrated)},
                      {"reliability_raw", number_or_null(s.reliability_raw)},
                      {"reliability_calibrated", number_or_null(s.reliability_calibrated)},
                      {"hit_rate_raw", number_or_null(s.hit_rate_raw)},
                      {"hit_rate_calibrated", number_or_null(s.hit_rate_calibrated)},
                      {"departure_raw", number_or_null(s.departure_raw)},
                      {"departure_calibrated", number_or_null(s.departure_calibrated)}});
  nlohmann::json blend = nlohmann::json::array(), window_methods = nlohmann::json::array();
  for (double a : c.blend) blend.push_back(number_or_null(a));
  for (CalibrationMethod m : c.window_methods) window_methods.push_back(calibration_method_name(m));
  return {{"kind", "calibration"},
          {"path", c.path},
          {"sha256", c.sha256},
          {"format_version", c.format_version},
          {"method", calibration_method_name(c.method)},
          {"states", c.states},
          {"regime_model", {{"file", c.model_file}, {"sha256", c.model_sha256}}},
          {"forecast_system",
           {{"grid", c.forecast_grid}, {"calendar", c.calendar}, {"members_per_initialisation", {c.members_min, c.members_max}},
            {"lagged_ensemble_members", c.ensemble_members}, {"reforecast_years", c.years},
            {"reforecast_files", c.files.size()}, {"lag_days", c.lag_days}, {"weights", c.weights}}},
          {"observed", c.observed},
          {"blend_coefficient_by_lead", blend},
          {"blend_shrinkage_z", c.shrinkage_z},
          {"window_methods", window_methods},
          {"cross_validated_scores", scores},
          {"created", c.created},
          {"tool_version", c.tool_version}};
}

std::string calibration_text(const Calibration& c) {
  std::ostringstream o;
  char line[240];
  o << "Calibration (" << calibration_method_name(c.method) << ") of " << c.model_file << ": " << c.files.size()
    << " reforecast files, " << c.years.size() << " season years (" << c.years.front() << "-" << c.years.back()
    << "), " << c.members_min << (c.members_max != c.members_min ? "-" + std::to_string(c.members_max) : "")
    << " members per initialisation, lagged over " << c.lag_days << " days (" << c.weights << "), "
    << std::lround(c.ensemble_members) << " members per lagged ensemble on average"
    << (c.unobserved_cases ? "; " + std::to_string(c.unobserved_cases) + " case days past the observed record left out"
                           : std::string())
    << ".\n"
    << "Cross-validated, one season year left out at a time (the drift and the fit), multi-category Brier skill "
       "against the record's monthly frequencies:\n";
  std::snprintf(line, sizeof line, "  %-7s %6s  %9s %9s  %9s %9s  %8s %8s  %-8s %5s  %9s %7s\n", "leads", "cases",
                "skill raw", "calibr.", "REL raw", "calibr.", "hit raw", "calibr.", "method", "a(L)", "|p-c| raw",
                "calibr.");
  o << line;
  for (const auto& s : c.scores) {
    double a = 0;
    int n = 0;
    for (int l = s.first; l <= s.last && l < c.n_leads(); ++l) a += c.blend(static_cast<arma::uword>(l)), ++n;
    const std::string method = calibration_method_name(c.method_at(s.first));
    std::snprintf(line, sizeof line, "  %-7s %6zu  %9.3f %9.3f  %9.4f %9.4f  %8.3f %8.3f  %-8s %5.2f  %9.2f %7.3f\n",
                  (std::to_string(s.first) + "-" + std::to_string(s.last)).c_str(), s.cases, s.skill_raw,
                  s.skill_calibrated, s.reliability_raw, s.reliability_calibrated, s.hit_rate_raw,
                  s.hit_rate_calibrated, method.c_str(), n ? a / n : arma::datum::nan, s.departure_raw,
                  s.departure_calibrated);
    o << line;
  }
  o << "REL: binned reliability (10 bins) summed over the states; method: what calibrates the window's days; a(L): "
       "the blend's mean coefficient in the window (1 keeps the raw probabilities, 0 is climatology; the window "
       "products' calibration whatever the method); |p-c|: the largest distance of any probability from the "
       "climatological frequency.\n";
  return o.str();
}

}  // namespace isohypse
