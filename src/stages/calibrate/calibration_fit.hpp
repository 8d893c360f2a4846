// Calibrate, steps 4 and 5: the fit and its cross-validated scores. The
// blend coefficient a(L) is fitted in closed form lead day by lead day and
// smoothed in lead; the logistic method fits one model per lead window. To
// score honestly, each season year's cases are recalibrated by a fit made
// without that year (leave one year out; the drift left it out already,
// reforecast_labels.hpp), and the scores by window compare those
// probabilities, the raw ones and the climatological frequencies.
#pragma once

#include "isohypse/io/calibration_file.hpp"
#include "stages/calibrate/calibration_cases.hpp"

namespace isohypse {

// Fills c.blend, c.blend_unsmoothed, c.cases, c.windows, c.logistic and
// c.scores from the cases (c.method, c.coefficient_smoothing_days and
// c.penalty_c set by the caller). report("fit", year, years). Returns the
// cross-validated calibrated probabilities of every case (cases x states).
arma::mat fit_calibration(const CalibrationCases& cases, const std::vector<int>& years,
                     const std::vector<LeadWindow>& windows, Calibration& c, const CalibrateProgress& report);

// The calibrated probabilities of the cases `rows` with the fitted c
// (blend: by lead; logistic: by the window of the lead).
arma::mat apply_calibration(const Calibration& c, const CalibrationCases& cases, const arma::uvec& rows);

}  // namespace isohypse
