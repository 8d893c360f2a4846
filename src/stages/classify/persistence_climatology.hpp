// Classify, step 6: the climatological chance that each state, in force at
// the issue date, lasts 3, 5 and 7 more days: counted in the model's
// labelled record (numerics/empirical_persistence), conditioned on the
// spell's age where the observed regime tells it and the record holds
// enough cases, and the Markov chain's p_kk^n beside it.
#pragma once

#include <armadillo>
#include <optional>
#include <vector>

#include "isohypse/numerics/empirical_persistence.hpp"
#include "stages/classify/observed_regime.hpp"

namespace isohypse {

struct PersistenceClimatology {
  std::vector<int> horizons;                          // n, days: 3, 5, 7
  std::vector<std::vector<EmpiricalLasting>> record;  // [state][horizon], from the model's record
  std::vector<int> requested_age;                     // [state]: the age asked for, 0 = none known
  arma::mat markov;                                   // n_states x horizons: p(s, s)^n
};

// The age of a spell of state s at the issue date, when the observation
// tells it: the observed regime's run (as_of on the issue date), that run
// plus one day (as_of the day before: being in s on the issue date means it
// held), or 1 for any other state observed the day before (a spell of it on
// the issue date has just begun). 0 otherwise: no observation, an older one,
// or another state observed on the issue date itself.
int spell_age_at_issue(const std::optional<ObservedRegime>& observed, const Date& issue, int state);

// Throws DataError naming the model file when its record is inconsistent;
// InternalError when the transition matrix is not (k+1) x (k+1) (a bug).
PersistenceClimatology persistence_climatology(const RegimeModel& model, const std::optional<ObservedRegime>& observed,
                                               const Date& issue, const std::vector<int>& horizons = {3, 5, 7});

}  // namespace isohypse
