#include "stages/classify/persistence_climatology.hpp"

#include <cmath>
#include <string>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

int spell_age_at_issue(const std::optional<ObservedRegime>& observed, const Date& issue, int state) {
  if (!observed || observed->age_days < 1) return 0;
  const std::int64_t gap = days_between(observed->as_of, issue);
  // Beyond a day the regime may have changed and changed back unseen.
  if (gap == 0) return observed->state == state ? observed->age_days : 0;
  if (gap == 1) return observed->state == state ? observed->age_days + 1 : 1;
  return 0;
}

PersistenceClimatology persistence_climatology(const RegimeModel& model, const std::optional<ObservedRegime>& observed,
                                               const Date& issue, const std::vector<int>& horizons) {
  const int n_states = model.k() + 1;
  if (model.transition.n_rows != static_cast<arma::uword>(n_states) ||
      model.transition.n_cols != static_cast<arma::uword>(n_states))
    throw InternalError("persistence_climatology: the model's transition matrix is " +
                        std::to_string(model.transition.n_rows) + " x " + std::to_string(model.transition.n_cols) +
                        " for " + std::to_string(n_states) + " states");
  const SeasonRecord season = season_record(model);
  PersistenceClimatology p{horizons, {}, {}, arma::mat(n_states, horizons.size())};
  for (int st = 0; st < n_states; ++st) {
    const int age = spell_age_at_issue(observed, issue, st);
    p.requested_age.push_back(age);
    std::vector<EmpiricalLasting> by_horizon;
    for (std::size_t h = 0; h < horizons.size(); ++h) {
      by_horizon.push_back(empirical_lasting(season.states, season.consecutive, st, horizons[h], age));
      p.markov(st, h) = std::pow(model.transition(st, st), horizons[h]);
    }
    p.record.push_back(std::move(by_horizon));
  }
  return p;
}

}  // namespace isohypse
