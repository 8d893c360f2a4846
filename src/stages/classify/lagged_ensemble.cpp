#include "stages/classify/lagged_ensemble.hpp"

#include "isohypse/base/error.hpp"
#include "isohypse/io/reader.hpp"

namespace isohypse {

namespace {

// The initialisations on or before the issue date; the latest `lag` of them when lag > 0.
std::vector<const Initialisation*> initialisations_up_to(const std::vector<Initialisation>& scanned,
                                                         const Date& issue, int lag) {
  std::vector<const Initialisation*> chosen;
  for (const auto& in : scanned)
    if (days_between(in.init_real, issue) >= 0) chosen.push_back(&in);
  if (chosen.empty())
    throw InputError("no forecast initialised on or before the issue date " + to_string(issue) + " (the first is " +
                     to_string(scanned.front().init_real) + ")");
  if (lag > 0 && static_cast<int>(chosen.size()) > lag) chosen.erase(chosen.begin(), chosen.end() - lag);
  return chosen;
}

}  // namespace

int LaggedEnsemble::total_members() const {
  int n = 0;
  for (const auto* in : chosen) n += static_cast<int>(in->members.size());
  return n;
}

LaggedEnsemble choose_lagged_ensemble(const RegimeModel& model, const ClassifyConfig& cfg,
                                      const ClassifyProgress& report) {
  LaggedEnsemble e;
  e.forecast_files = expand_paths(cfg.forecasts);
  report("scan", 0, static_cast<int>(e.forecast_files.size()));
  e.scanned = scan_forecasts(e.forecast_files, cfg.variable, model.domain, &model.grid);
  e.issue = cfg.issue_date ? *cfg.issue_date : e.scanned.back().init_real;
  e.issue.calendar = Calendar::ProlepticGregorian;
  e.chosen = initialisations_up_to(e.scanned, e.issue, cfg.lag);
  for (const auto* in : e.chosen) {
    e.ages.push_back(static_cast<int>(days_between(in->init_real, e.issue)));
    std::vector<Date> valid;
    for (int l = 0; l < in->n_leads; ++l) valid.push_back(in->valid_model(l));
    e.valid_model.push_back(std::move(valid));
  }
  e.weights = initialisation_weights(e.ages, cfg.weights);
  e.regrid = Regridder(e.latest().native_grid, model.grid, e.latest().files.front());
  return e;
}

}  // namespace isohypse
