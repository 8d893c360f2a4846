// Classify, step 1: choose the lagged ensemble. Every forecast file is
// scanned (metadata only); the initialisations on or before the issue date
// are kept, the latest `lag` of them when a lag is set, each with its age
// and its weight.
#pragma once

#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/io/forecast.hpp"
#include "isohypse/stages/classify.hpp"

namespace isohypse {

struct LaggedEnsemble {
  LaggedEnsemble() = default;
  // `chosen` points into `scanned`: a move keeps the pointers valid, a copy would not.
  LaggedEnsemble(LaggedEnsemble&&) = default;
  LaggedEnsemble& operator=(LaggedEnsemble&&) = default;
  LaggedEnsemble(const LaggedEnsemble&) = delete;
  LaggedEnsemble& operator=(const LaggedEnsemble&) = delete;

  std::vector<std::string> forecast_files;     // every file the forecast paths and globs matched
  std::vector<Initialisation> scanned;         // every initialisation found, by date
  std::vector<const Initialisation*> chosen;   // into `scanned`: the lagged ensemble, oldest first, never empty
  Date issue;                                  // the issue date, real (proleptic Gregorian) calendar
  std::vector<int> ages;                       // per chosen: days from its initialisation to the issue date (>= 0)
  std::vector<double> weights;                 // per chosen: the lagged-ensemble weight of its initialisation
  std::vector<std::vector<Date>> valid_model;  // per chosen: the model-calendar valid date of each lead day
  Regridder regrid;                            // the forecasts' grid onto the regime model's grid

  const Initialisation& latest() const { return *chosen.back(); }
  // Members of all chosen initialisations.
  int total_members() const;
};

// Scans cfg.forecasts and chooses the ensemble for the issue date (the
// latest initialisation when cfg.issue_date is unset). report("scan", 0,
// files) before the scan. Throws InputError when no forecast is initialised
// on or before the issue date, or a forecast grid does not cover the
// regime domain; scan_forecasts' errors otherwise.
LaggedEnsemble choose_lagged_ensemble(const RegimeModel& model, const ClassifyConfig& cfg,
                                      const ClassifyProgress& report);

}  // namespace isohypse
