// Calibrate, step 2: label every reforecast member. Each member is labelled
// against the regime model's climatology plus the drift of the reforecasts
// near its day of the year from the OTHER season years
// (numerics/model_drift.hpp), so that a year's own weather never enters the
// drift its forecasts are corrected with (the leave-one-year-out
// cross-validation of the drift). The initialisations are read once, in
// order of their place in the year: each one's fields are held until the
// drift of its neighbours in the year is complete, then labelled and freed,
// so that only the initialisations of a few weeks of the year are in memory
// at a time (where the drift windows wrap round the year, the first ones are
// read a second time instead of held).
#pragma once

#include <vector>

#include "stages/calibrate/reforecast_issues.hpp"

namespace isohypse {

struct ReforecastLabels {
  // labels[i][m]: member m of initialisation i, the state (0..k, k = no
  // regime) on each lead day.
  std::vector<std::vector<std::vector<int>>> labels;
  double read_s = 0;    // netCDF-C reads, summed over the threads
  double decode_s = 0;  // inflating, unpacking, daily means and regridding what was read, summed likewise
  int threads = 0;
};

// report("read and label", done, n) as the initialisations are labelled. Throws InputError
// when an initialisation has no reforecast of another season year near its
// day of the year with at least its lead days; the reader's DataError.
ReforecastLabels label_reforecasts(const RegimeModel& model, const CalibrateConfig& cfg, const ReforecastSet& set,
                                   const CalibrateProgress& report);

}  // namespace isohypse
