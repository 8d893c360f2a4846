#include "stages/classify/calibrated_guidance.hpp"

#include <cmath>

#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

// The calibrated probabilities of one day: by lead from the issue date.
arma::vec calibrate_day(const Calibration& c, const DayProbabilities& d, const arma::vec& clim) {
  if (c.method_at(d.offset) == CalibrationMethod::Blend)
    return clim + c.blend_for(d.offset, d.members) * (d.probability - clim);
  const int w = c.window_of(d.offset);
  const arma::mat X = logistic_features(d.probability.t(), arma::vec{double(d.members)}, clim.t());
  return logistic_probabilities(c.logistic.at(static_cast<std::size_t>(w)), X).row(0).t();
}

CalibratedWindow calibrate_window(const RegimeModel& model, const Calibration& c, const WindowSummary& w,
                                  const Date& issue) {
  CalibratedWindow out;
  double a = 0;
  for (int l = w.first; l <= w.last; ++l) a += c.blend_for(l, w.members);
  out.coefficient = a / (w.last - w.first + 1);
  out.month = add_days(issue, (w.first + w.last) / 2).month;
  out.climatology = window_climatology(model, w.last - w.first + 1, out.month);
  const WindowClimatology& k = out.climatology;
  // Expected days: only the days the members cover count in the raw sum, so the climatology is scaled to them.
  const double covered = arma::accu(w.expected_days), length = w.last - w.first + 1;
  const arma::vec clim_days = k.expected_days * (covered / length);
  out.expected_days = clim_days + out.coefficient * (w.expected_days - clim_days);
  out.dominance = w.dominance.is_finite() && k.dominance.is_finite()
                      ? arma::vec(k.dominance + out.coefficient * (w.dominance - k.dominance))
                      : w.dominance;
  return out;
}

}  // namespace

Calibration load_calibration(const RegimeModel& model, const std::string& path) {
  Calibration c = read_calibration(path);
  if (c.model_sha256 != model.sha256)
    throw InputError("calibration (--calibration): " + path + " was made for the regime model " + c.model_file +
                     " (SHA-256 " + c.model_sha256.substr(0, 12) + "...), not for " + model.path + " (SHA-256 " +
                     model.sha256.substr(0, 12) + "...); run isohypse calibrate with this model");
  if (c.states != model_states(model))
    throw InputError("calibration (--calibration): " + path + " has other states than the regime model " +
                     model.path);
  return c;
}

CalibratedGuidance calibrated_guidance(const RegimeModel& model, Calibration calibration,
                                       const LaggedEnsemble& ensemble, const WindowStatistics& statistics) {
  CalibratedGuidance g;
  g.calibration = std::move(calibration);
  const MonthlyStateFrequencies monthly = monthly_state_frequencies(model);
  for (const auto& d : statistics.daily) {
    const arma::vec& clim = monthly.of(add_days(ensemble.issue, d.offset).month);
    g.daily.push_back(clim.is_finite() ? calibrate_day(g.calibration, d, clim) : d.probability);
    g.daily_most_likely.push_back(static_cast<int>(g.daily.back().index_max()));
  }
  for (const auto& w : statistics.windows) g.windows.push_back(calibrate_window(model, g.calibration, w, ensemble.issue));
  const int members = ensemble.total_members();
  if (g.calibration.ensemble_members > 0 && members > 2.0 * g.calibration.ensemble_members)
    g.ensemble_note = "the operational lagged ensemble has " + std::to_string(members) +
                      " members, over twice the " + std::to_string(std::lround(g.calibration.ensemble_members)) +
                      " of the reforecast ensembles the calibration was fitted on: its raw probabilities are less "
                      "noisy than those the calibration learnt to correct" +
                      std::string(g.calibration.blend_groups.empty()
                                      ? ", so it may damp them more than needed"
                                      : "; the blend's a(L) is refitted for each day's members (the reforecasts' "
                                        "sampling noise rescaled to them), a logistic window is applied as fitted");
  return g;
}

}  // namespace isohypse
