// The calibration stage: reforecasts in, a recalibration of the regime
// probabilities by lead out (io/calibration_file.hpp). Its steps
// (src/stages/calibrate/, one file each):
//   the reforecast issues (scan the reforecasts; each reforecast date is an
//   issue with the reforecasts of the same season year initialised within
//   lag_days before it, as the daily lagged ensemble) | label every
//   reforecast member (the drift of the other years removed,
//   numerics/model_drift.hpp) | the cases (each issue's lagged
//   probabilities by lead day, the observed state, the record's monthly
//   frequencies) | fit by lead with one season year left out at a time, and
//   on all years | the cross-validated scores by lead window.
#pragma once

#include <functional>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "isohypse/base/vocabulary.hpp"
#include "isohypse/io/calibration_file.hpp"
#include "isohypse/numerics/ensemble_stats.hpp"
#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

struct CalibrateConfig {
  std::vector<std::string> reforecasts;  // files or globs
  std::vector<std::string> observed;     // analysis or reanalysis files; empty: the model's labelled record
  std::string variable;                  // empty: automatic (both reforecasts and observed)
  int lag = 4;                           // the daily lag the calibration is for (initialisations)
  int lag_days = 0;                      // 0: the span of the daily lag, lag - 1 days
  Weighting weights;                     // the daily stage's age weights
  CalibrationMethod method = CalibrationMethod::Blend;
  std::vector<LeadWindow> windows = default_windows();
  int reforecast_window_days = 7;        // the drift: reforecasts within +-N days of the year
  int lead_smoothing_days = 5;           // the drift's running mean in lead
  int coefficient_smoothing_days = 5;    // the blend coefficient's running mean in lead
  double shrinkage_z = 2.0;              // the blend's shrinkage towards 0: max(0, 1 - (z SE / a)^2); 0 = none
  double penalty_c = 1.0;                // logistic: inverse L2 penalty, as scikit-learn's C
  int threads = 0;                       // 0 = every core
  int held_fields_mb = 1024;             // reforecast fields held from their read to their labels; beyond, read again
  std::string model_file;                // for the identity (the model's own path when empty)

  // Checks every setting: reforecasts given, lag >= 1, lag_days 0..30,
  // windows as classify's, smoothing 0..15 days, reforecast window 0..60,
  // shrinkage 0..5, C > 0, threads >= 0, held fields >= 0 MB. Throws InputError naming the setting and its flag.
  void validate() const;
};

// The least numbers the fit needs: season years (to leave one out and
// still fit on two), and cases per lead day.
inline constexpr int kMinCalibrationYears = 3;
inline constexpr std::size_t kMinCasesPerLead = 30;

struct CalibrateTimings {
  double scan_s = 0, label_s = 0, cases_s = 0, fit_s = 0, total_s = 0;
  double read_s = 0;    // of label_s: netCDF-C reads, summed over the threads
  double decode_s = 0;  // of label_s: inflating, unpacking and regridding what was read, summed likewise
  int threads = 0;
};

using CalibrateProgress = std::function<void(const std::string& stage, int done, int total)>;

// Runs the stage (config.validate() first). Throws InputError naming the
// files when the reforecasts are too few (fewer than kMinCalibrationYears
// season years, or fewer than kMinCasesPerLead cases at a lead day: the
// message says how many are needed), when the observed sequence does not
// cover the reforecasts' valid dates in season, or the reforecasts' grid
// does not cover the model's domain; DataError for bad data.
// cases_csv, if given, receives every case as CSV (issue_date, valid_date,
// lead_days, season_year, members, observed, then raw_STATE,
// calibrated_STATE (cross-validated: fitted without the case's season year)
// and climatology_STATE for each state), for checking the fit outside.
Calibration calibrate_reforecasts(const RegimeModel& model, const CalibrateConfig& config,
                                  const CalibrateProgress& progress = {}, CalibrateTimings* timings = nullptr,
                                  std::string* cases_csv = nullptr);

// The terminal summary: the cross-validated scores by window, raw against
// calibrated, and the coefficients.
std::string calibration_text(const Calibration& c);

// What `isohypse inspect` says of a calibration file: its method, identity
// (regime model, forecast grid, calendar, members, reforecast years and
// files), coefficients by lead and cross-validated scores by window.
nlohmann::json calibration_summary(const Calibration& c);

}  // namespace isohypse
