// The calibration file that `isohypse calibrate` writes and `classify
// --calibration` reads: NetCDF-4, its own format version (global attribute
// isohypse_calibration_format_version; a regime model's
// isohypse_format_version is absent, so neither file is taken for the
// other). It holds the recalibration of the regime probabilities by lead
// (numerics/calibration.hpp), its cross-validated scores by lead window, and
// the identity of what it was fitted on: the forecast system (grid, members,
// calendar, reforecast years and files) and the regime model (file name and
// SHA-256).
#pragma once

#include <armadillo>
#include <cstddef>
#include <string>
#include <vector>

#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/calibration.hpp"

namespace isohypse {

inline constexpr int kCalibrationFormatVersion = 1;

// Auto: per lead window, whichever of the two has the lower cross-validated
// multi-category Brier score (Calibration::window_methods says which).
enum class CalibrationMethod { Blend, Logistic, Auto };
std::string calibration_method_name(CalibrationMethod m);  // "blend", "logistic", "auto"
// Throws InputError quoting the text and naming --method for anything else.
CalibrationMethod parse_calibration_method(const std::string& text);

// Cross-validated (each reforecast year scored by a calibration fitted
// without it) scores of one lead window, over its cases (reforecast issue
// dates x lead days with an observed state in the model's season).
struct CalibrationScores {
  int first = 0, last = 0;
  std::size_t cases = 0;
  double brier_raw = 0, brier_calibrated = 0, brier_climatology = 0;  // mean multi-category Brier score
  double skill_raw = 0, skill_calibrated = 0;                         // against climatology
  // Binned reliability and resolution terms (10 bins, Stephenson et al.
  // 2008) of each state's probability, summed over the states.
  double reliability_raw = 0, reliability_calibrated = 0;
  double resolution_raw = 0, resolution_calibrated = 0;
  double hit_rate_raw = 0, hit_rate_calibrated = 0;  // the most likely state observed
  // The largest |p - c| of any state and case: how far from the
  // climatological frequencies the probabilities go (near 0 calibrated
  // where the forecast has no skill).
  double departure_raw = 0, departure_calibrated = 0;
};

struct Calibration {
  int format_version = kCalibrationFormatVersion;
  CalibrationMethod method = CalibrationMethod::Blend;
  std::vector<std::string> states;  // the model's regime ids, then no_regime
  // Per lead day 0..n-1: the blend coefficient a(L) smoothed in lead (the
  // blend method's daily calibration, and every window product's), the
  // unsmoothed fit, the pooled fit before its shrinkage and clip, that
  // fit's jackknife standard error over season years, and the cases
  // behind it.
  arma::vec blend, blend_unsmoothed, blend_fitted, blend_standard_error;
  // Per lead day and season year (years as `years`): the sums behind a(L)
  // (the leads pooled for it), so that classify can refit a(L) for its own
  // ensemble size (numerics/calibration.hpp, for_ensemble). Empty in a
  // file without them.
  std::vector<std::vector<BlendSums>> blend_groups;
  std::vector<std::size_t> cases;
  std::vector<LeadWindow> windows;      // the scores' windows, and the logistic models'
  std::vector<LogisticModel> logistic;  // per window with the logistic or auto method, else empty
  // The method applied in each window: all the same for blend and logistic;
  // for auto, the one with the lower cross-validated Brier score there.
  std::vector<CalibrationMethod> window_methods;
  std::vector<CalibrationScores> scores;
  int coefficient_smoothing_days = 5;
  double shrinkage_z = 2.0;  // the blend's shrinkage: max(0, 1 - (z SE / a)^2); 0 = none
  double penalty_c = 1.0;
  // What it was fitted on.
  std::string model_file, model_sha256;
  std::string forecast_grid;  // the reforecasts' native grid, in words
  std::string calendar;
  int members_min = 0, members_max = 0;  // members per reforecast initialisation
  double ensemble_members = 0;           // mean members of a lagged reforecast ensemble
  std::vector<int> years;                // reforecast (season) years
  std::vector<std::string> files;
  int lag_days = 0;
  std::string weights;      // Weighting::to_string
  std::string observed;     // "regime model record" or "analysis files: ..."
  std::size_t unobserved_cases = 0;  // in-season case days without an observed state, left out
  std::string created, tool_version;
  // Filled in when read.
  std::string path, sha256;

  int n_leads() const { return static_cast<int>(blend.n_elem); }
  // The method applied at lead day L (that of window_of(L)).
  CalibrationMethod method_at(int lead) const;
  // The blend coefficient of lead day L (the last lead's past the end; L < 0 as lead 0).
  double blend_at(int lead) const;
  // a(L) for an ensemble of `members` members: the pooled sums with their
  // sampling noise rescaled to that size, shrunk and clipped as when fitted
  // (0 where nothing but noise is left). blend_at(L) where the file has no
  // sums or a(L) was filled in from a neighbouring lead.
  double blend_for(int lead, double members) const;
  // The index of the window holding lead L, or the nearest window; -1 when there is none.
  int window_of(int lead) const;
};

// Writes atomically (a temporary renamed into place). Throws InputError
// naming the path when it cannot be written.
void write_calibration(const Calibration& c, const std::string& path);
// Throws InputError when the file cannot be opened; DataError naming the
// file when it is not a calibration file, is of a newer format version, or
// an array has the wrong size.
Calibration read_calibration(const std::string& path);
// True when the file opens and carries isohypse_calibration_format_version.
bool is_calibration_file(const std::string& path);

}  // namespace isohypse
