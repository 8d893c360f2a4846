// Fixtures shared by the verify step tests (planted answers, worked by hand).
#pragma once

#include <armadillo>
#include <utility>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/stages/observed.hpp"
#include "stages/verify/guidance_archive.hpp"

namespace isohypse::verification::fixtures {

// One issue of 2026-03-30 with leads 0..4 (probabilities 0.5, 0.3, 0.2 of
// three states): 30 and 31 March inside a Nov-Mar season, 1..3 April outside
// it; every day observed as `observed_state`.
inline std::pair<GuidanceSet, ObservedSequence> march_april_issue(int observed_state) {
  GuidanceSet guidance;
  GuidanceIssue issue{"a.json", make_date(2026, 3, 30, Calendar::ProlepticGregorian), {}};
  for (int lead = 0; lead <= 4; ++lead)
    issue.daily.push_back({add_days(issue.issue, lead), lead, arma::vec{0.5, 0.3, 0.2}, 0});
  guidance.issues.push_back(issue);
  ObservedSequence observed;
  observed.source = "analysis files";
  for (int d = 0; d <= 4; ++d) {
    observed.dates.push_back(add_days(issue.issue, d));
    observed.labels.push_back(observed_state);
  }
  return {guidance, observed};
}

// The Nov-Mar season of march_april_issue.
inline const std::vector<int> kNovemberToMarch = {11, 12, 1, 2, 3};

}  // namespace isohypse::verification::fixtures
