// Classify, step 5b (with --calibration): the calibrated probabilities. The
// calibration file (io/calibration_file.hpp, written by `isohypse
// calibrate`) recalibrates each valid day's probabilities by its lead day
// (the blend c + a(L) (p - c), or the logistic model of the lead's window),
// with c the record's frequencies of the valid month. A window's dominance
// and expected days are blended the same way with the window's mean a(L),
// towards their climatological values for a window of that length centred
// in that month (numerics/state_frequencies.hpp).
#pragma once

#include <armadillo>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/io/calibration_file.hpp"
#include "isohypse/numerics/state_frequencies.hpp"
#include "stages/classify/lagged_ensemble.hpp"
#include "stages/classify/window_statistics.hpp"

namespace isohypse {

struct CalibratedWindow {
  arma::vec dominance, expected_days;          // calibrated
  double coefficient = 1.0;                    // the window's mean a(L)
  WindowClimatology climatology;               // what it is blended towards
  int month = 0;                               // of the window's middle day
};

struct CalibratedGuidance {
  Calibration calibration;
  std::vector<arma::vec> daily;                // per WindowStatistics::daily entry
  std::vector<int> daily_most_likely;
  std::vector<CalibratedWindow> windows;       // per WindowStatistics::windows entry
  // Set when the operational ensemble is much larger (over twice) than the
  // lagged reforecast ensembles the calibration was fitted on.
  std::string ensemble_note;
};

// Reads cfg.calibration. Throws InputError naming both files when the
// calibration was made for another regime model (its file name and SHA-256
// against this model's) or for other states; the reader's errors.
Calibration load_calibration(const RegimeModel& model, const std::string& path);

CalibratedGuidance calibrated_guidance(const RegimeModel& model, Calibration calibration,
                                       const LaggedEnsemble& ensemble, const WindowStatistics& statistics);

}  // namespace isohypse
