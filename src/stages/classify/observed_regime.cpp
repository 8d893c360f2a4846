#include "stages/classify/observed_regime.hpp"

#include "isohypse/base/field.hpp"
#include "isohypse/numerics/ensemble_stats.hpp"
#include "isohypse/stages/observed.hpp"

namespace isohypse {

std::optional<ObservedRegime> latest_observed_regime(const RegimeModel& model, const ClassifyConfig& cfg,
                                                     const Date& issue) {
  ObservedSequence obs = cfg.analysis.empty()
                             ? observed_from_model(model)
                             : observed_from_files(model, cfg.analysis, cfg.variable, std::nullopt, issue);
  while (!obs.dates.empty() && days_between(obs.dates.back(), issue) < 0) {
    obs.dates.pop_back();
    obs.labels.pop_back();
  }
  if (obs.dates.empty()) return std::nullopt;
  if (cfg.analysis.empty() && days_between(obs.dates.back(), issue) > 1) return std::nullopt;
  return ObservedRegime{obs.labels.back(), current_run_length(obs.labels, consecutive_flags(obs.dates)),
                        obs.dates.back(), obs.source};
}

}  // namespace isohypse
