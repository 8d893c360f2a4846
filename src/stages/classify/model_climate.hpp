// Classify, step 2: the model climate from reforecasts. A forecast model
// drifts with lead time; the mean drift of reforecasts started near the same
// day of the year, lead day by lead day, is removed while the regime model's
// own climatology stays the reference (numerics/model_drift.hpp), so that a
// difference between the reforecast years and the model's record does not
// leak into the anomalies. Without reforecasts the anomalies are taken
// against the regime model's reanalysis climatology, and the drift stays.
#pragma once

#include <armadillo>
#include <string>
#include <vector>

#include "isohypse/io/forecast.hpp"
#include "isohypse/stages/classify.hpp"
#include "stages/classify/lagged_ensemble.hpp"

namespace isohypse {

// Scans cfg.reforecasts (metadata only; empty when none are given).
// report("scan reforecasts", 0, files) before the scan. Throws InputError
// naming both files when the reforecasts' grid differs from the forecasts'.
std::vector<Initialisation> scan_reforecasts(const RegimeModel& model, const ClassifyConfig& cfg,
                                             const LaggedEnsemble& ensemble, const ClassifyProgress& report);

// What each chosen initialisation's anomalies are taken against.
struct ModelClimate {
  bool from_reforecasts = false;  // false: the regime model's climatology (no bias correction)
  // Per chosen initialisation: n_model_points x n_leads, metres, lead 0 first.
  std::vector<arma::fmat> by_initialisation;
  std::vector<std::string> reforecast_files_read;  // the files of every reforecast initialisation read
};

// The model climate of each chosen initialisation: the regime model's
// climatology at its valid dates plus the mean drift (members minus the
// climatology at their valid dates) of every reforecast initialised within
// +-cfg.reforecast_window_days of its day of the year (on a 365-day year)
// with at least its lead days, by lead day, the drift smoothed with a
// centred running mean of cfg.lead_smoothing_days in lead. Each reforecast initialisation is read once, on cfg.threads threads
// (report("reforecasts", done, total)); the result does not depend on the
// threads. With no reforecasts: the regime model's climatology at the
// model-calendar valid dates. Throws InputError when a chosen initialisation
// has no reforecast in its window; the reader's DataError for bad data.
ModelClimate build_model_climate(const RegimeModel& model, const ClassifyConfig& cfg, const LaggedEnsemble& ensemble,
                                 const std::vector<Initialisation>& reforecasts, const ClassifyProgress& report);

}  // namespace isohypse
