// Calibrate, step 2: label every reforecast member. Each reforecast
// initialisation is read twice: once for the model's drift (its members
// minus the regime model's climatology, summed), once to label its members
// against the climatology plus the drift of the reforecasts near its day of
// the year from the OTHER season years (numerics/model_drift.hpp), so that a
// year's own weather never enters the drift its forecasts are corrected
// with (the leave-one-year-out cross-validation of the drift).
#pragma once

#include <vector>

#include "stages/calibrate/reforecast_issues.hpp"

namespace isohypse {

struct ReforecastLabels {
  // labels[i][m]: member m of initialisation i, the state (0..k, k = no
  // regime) on each lead day.
  std::vector<std::vector<std::vector<int>>> labels;
  double read_s = 0;  // netCDF-C reads, summed over both passes and the threads
  int threads = 0;
};

// report("drift", done, n) then report("label", done, n). Throws InputError
// when an initialisation has no reforecast of another season year near its
// day of the year with at least its lead days; the reader's DataError.
ReforecastLabels label_reforecasts(const RegimeModel& model, const CalibrateConfig& cfg, const ReforecastSet& set,
                                   const CalibrateProgress& report);

}  // namespace isohypse
