// Step "find episodes" of the post-mortem: observed regime episodes and
// whether the guidance caught their onset (private to the verify stage).
#pragma once

#include <armadillo>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <vector>

#include "isohypse/numerics/regime_model.hpp"
#include "stages/verify/guidance_archive.hpp"
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

// When an issue commits to a regime on a day: the regime is the most likely
// state, ahead of the second by at least `margin`, and above its
// climatological frequency by at least `excess` (VerifyConfig catch_margin,
// catch_excess). The rule of a caught episode and of a false alarm.
struct CatchRule {
  double margin = 0.10, excess = 0.15;
  StateClimatology climatology;  // the frequency of the case's valid month: StateClimatology::reference
  bool commits(const Case& c, int state) const;
};

// Episodes: observed runs of at least min_days in one regime (not the
// no-regime state) whose onset can be scored: inside the observed period
// (a run under way on its first day has no known onset) and seen by an issue
// made before it (a case at the onset of lead 1 day or more). An issue of
// lead L to the onset catches it when it commits to the regime on the onset
// day (CatchRule). Per episode: the issues that saw the onset and the leads
// at which they caught it, caught (any), longest_lead_days, and
// committed_lead_days: the longest lead from which every later issue (every
// shorter lead to the onset) caught it, null when the last issue before the
// onset did not.
struct Episodes {
  // regime, name, onset, end, days, issues (the number that saw the onset),
  // caught, longest_lead_days, committed_lead_days, caught_at (issue_date,
  // lead_days)
  nlohmann::json list = nlohmann::json::array();
  int caught = 0, missed = 0;
  int under_way = 0;  // runs of min_days or more under way on the first observed day: not scored
  int unseen = 0;     // onsets no issue was made before: not scored
};

Episodes find_episodes(const RegimeModel& model, const StateClimatology& climatology, const Cases& cases,
                       const GuidanceSet& guidance, int min_days, const CatchRule& rule);

}  // namespace isohypse::verification
