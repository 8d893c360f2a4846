// Step "find false alarms" of the post-mortem: regime episodes the guidance
// forecast that did not happen (private to the verify stage).
#pragma once

#include "stages/verify/episodes.hpp"

#include <cstddef>
#include <nlohmann/json.hpp>
#include <vector>

#include "stages/verify/guidance_archive.hpp"
#include "stages/verify/verification_cases.hpp"

namespace isohypse::verification {

// A false alarm: within one issue, a run of consecutive leads (1 day or
// more) of at least min_days on which the issue commits to the same regime
// (CatchRule, the rule of a caught episode; not the no-regime state), which
// the observations confirm on fewer than half of its days. Only leads that
// have an observation count.
struct FalseAlarms {
  static constexpr std::size_t kListed = 500;     // the list keeps the first 500 (the report stays small)
  nlohmann::json list = nlohmann::json::array();  // issue_date, regime, from_lead_days, to_lead_days, observed_fraction
  std::size_t count = 0;                          // all of them
  std::vector<int> by_regime;                     // per regime (k entries)
};

FalseAlarms find_false_alarms(const StateClimatology& climatology, const GuidanceSet& guidance, const Cases& cases,
                              int min_days, const CatchRule& rule);

}  // namespace isohypse::verification
