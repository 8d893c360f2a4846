// Empirical persistence (METHODS.md §8, common practice): the climatological
// probability that a regime lasts at least n more days, counted in the
// model's labelled record instead of read off the Markov chain (p_kk^n
// assumes the chance of staying does not depend on how long a spell has
// lasted, which real regimes do not obey).
//
// A day counts for horizon n when it is in the season and its next n days
// are in the record, in the season and consecutive (no gap, no season
// break). It "lasts" when those n days are all in its state. The age of a
// day is the length of its state's run ending on it, counted back over
// consecutive in-season days only (age 1 = the state began that day), so a
// spell that started before a season break is counted from the season's
// first day.
#pragma once

#include <vector>

#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

// The model's record as a sequence of states over its in-season days, in
// date order: states[t] in 0..k (no regime, label -1, is state k);
// consecutive[t] != 0 when day t is the calendar day after day t-1 and both
// are in the season (consecutive[0] is 0). Throws DataError naming the
// model's path when dates, labels and in_season differ in length or a label
// is outside -1..k-1.
struct SeasonRecord {
  std::vector<int> states;
  std::vector<char> consecutive;
};
SeasonRecord season_record(const RegimeModel& model);

// Counts behind one empirical probability.
struct LastingCount {
  int cases = 0;   // days in the state (of the given age, when one is given) that count for the horizon
  int lasted = 0;  // of which the state held on each of the next n days
  double probability() const;  // lasted / cases; NaN when cases == 0
};

// states: 0..n_states-1 per day, or < 0 for a missing label (never counted,
// breaks runs); consecutive as in SeasonRecord. age_days = 0 counts every day
// in the state; age_days >= 1 only days whose age is exactly that. Throws
// InternalError when the lengths differ, n < 1 or age_days < 0.
LastingCount lasting_count(const std::vector<int>& states, const std::vector<char>& consecutive, int state, int n,
                           int age_days = 0);

// The climatological value given out: conditioned on the spell's age when
// at least min_cases days of that age count, otherwise unconditioned.
struct EmpiricalLasting {
  double probability = 0.0;  // NaN when no day counts
  int cases = 0;             // days behind the probability
  int age_days = 0;          // the age conditioned on; 0 = unconditioned
  int age_cases = 0;         // days of the requested age (0 when none was requested)
};

// 30 cases: "common practice" for the least sample on which a proportion is
// given as a number rather than a count (its standard error is then at most
// about 0.09).
constexpr int kMinAgeCases = 30;

// age_days = 0 asks for the unconditioned value. Throws like lasting_count,
// and InternalError when min_cases < 1.
EmpiricalLasting empirical_lasting(const std::vector<int>& states, const std::vector<char>& consecutive, int state,
                                   int n, int age_days = 0, int min_cases = kMinAgeCases);

}  // namespace isohypse
