// Calibrate, steps 4 and 5: the fit and its cross-validated scores. The
// blend coefficient a(L) is fitted in closed form lead day by lead day and
// smoothed in lead, and shrunk by its doubt; the logistic method fits one
// model per lead window; auto fits both and keeps, per window, the one with
// the lower cross-validated Brier score (a choice between two made on the
// same held-out scores it reports: with thousands of cases per window the
// optimism of that choice is small, but it is not zero). To
// score honestly, each season year's cases are recalibrated by a fit made
// without that year (leave one year out; the drift left it out already,
// reforecast_labels.hpp), and the scores by window compare those
// probabilities, the raw ones and the climatological frequencies.
#pragma once

#include "isohypse/io/calibration_file.hpp"
#include "stages/calibrate/calibration_cases.hpp"

namespace isohypse {

// Fills c.blend (and its fitted value and standard error), c.blend_unsmoothed,
// c.cases, c.windows, c.window_methods, c.logistic and c.scores from the
// cases (c.method, c.coefficient_smoothing_days, c.shrinkage_z and
// c.penalty_c set by the caller). The leave-one-year-out refits run on
// `threads` threads (0: every core), the logistic ones starting from the fit
// on every year. report("fit", years done, years). Returns the
// cross-validated calibrated probabilities of every case (cases x states).
arma::mat fit_calibration(const CalibrationCases& cases, const std::vector<int>& years,
                          const std::vector<LeadWindow>& windows, Calibration& c, int threads,
                          const CalibrateProgress& report);

// The calibrated probabilities of the cases `rows` with the fitted c
// (each lead by its window's method: the blend by lead, the logistic
// model of the window).
arma::mat apply_calibration(const Calibration& c, const CalibrationCases& cases, const arma::uvec& rows);

}  // namespace isohypse
