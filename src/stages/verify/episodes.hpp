// Step "find episodes" of the post-mortem: observed regime episodes and
// whether the guidance caught their onset (private to the verify stage).
#pragma once

#include <cstdint>
#include <nlohmann/json.hpp>
#include <vector>

#include "isohypse/numerics/regime_model.hpp"
#include "stages/verify/verification_cases.hpp"

namespace isohypse::verification {

// A run of consecutive observed days in one state.
struct ObservedRun {
  int state = 0;
  std::int64_t onset = 0, end = 0;  // day numbers, real calendar, inclusive
  int days = 0;
};

// The runs of cases.observed, in time order; a missing day ends a run.
std::vector<ObservedRun> observed_runs(const ObservedDays& observed);

// Episodes: observed runs of at least min_days in one regime (not the
// no-regime state). One is caught when guidance of lead 1 day or more had
// it as the most likely state, or gave it a probability of at least 0.5, on
// its onset day; longest_lead_days is the longest such lead.
struct Episodes {
  nlohmann::json list = nlohmann::json::array();  // regime, name, onset, end, days, caught, longest_lead_days
  int caught = 0, missed = 0;
};

// n_issues: the number of guidance issues the cases come from.
Episodes find_episodes(const RegimeModel& model, const StateClimatology& climatology, const Cases& cases,
                       std::size_t n_issues, int min_days);

}  // namespace isohypse::verification
