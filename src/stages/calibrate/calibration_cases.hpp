// Calibrate, step 3: the cases. For every reforecast issue, its lagged
// ensemble's probabilities on each lead day from the issue date
// (numerics/ensemble_stats.hpp daily_probabilities, as the daily stage
// computes them), paired with the observed state of the valid date and the
// record's frequencies of the valid month (numerics/state_frequencies.hpp).
// Only valid dates in the model's season count.
#pragma once

#include <armadillo>
#include <string>
#include <vector>

#include "isohypse/stages/observed.hpp"
#include "stages/calibrate/reforecast_issues.hpp"
#include "stages/calibrate/reforecast_labels.hpp"

namespace isohypse {

struct CalibrationCases {
  arma::mat p;              // cases x states: raw lagged probabilities
  arma::mat c;              // cases x states: climatological frequencies of the valid month
  arma::vec members;        // members behind each case's p
  std::vector<int> observed, lead, year;
  std::vector<Date> issue;  // real calendar
  int n_leads = 0;          // leads 0..n_leads-1 occur
  std::size_t unobserved = 0;  // in-season case days left out: no observed state (past the record's end)
};

// The observed sequence the cases are scored on: cfg.observed labelled with
// the model (between the first and last valid date of the reforecasts), or
// the model's own record when none are given.
ObservedSequence calibration_observed(const RegimeModel& model, const CalibrateConfig& cfg, const ReforecastSet& set);

// Throws InputError when the observed sequence misses more than a tenth of
// the reforecasts' in-season valid dates (naming the source, how many, the
// first missing date and the period the sequence covers). A record that
// ends a few weeks before the last reforecasts' leads do is common: those
// days are left out of the cases and counted.
void check_observed_coverage(const RegimeModel& model, const ReforecastSet& set, const ObservedSequence& observed);

// Throws InputError when lead day 1 has fewer than kMinCasesPerLead cases
// (saying how many reforecasts that needs).
CalibrationCases calibration_cases(const RegimeModel& model, const ReforecastSet& set, const ReforecastLabels& labels,
                                   const ObservedSequence& observed);

}  // namespace isohypse
