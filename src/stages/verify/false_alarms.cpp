#include "stages/verify/false_alarms.hpp"

#include <algorithm>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse::verification {

namespace {

// Each issue's cases of lead 1 day or more, by lead.
std::vector<std::vector<const Case*>> cases_by_issue(const Cases& cases, std::size_t n_issues) {
  std::vector<std::vector<const Case*>> by_issue(n_issues);
  for (const Case& c : cases.list) {
    if (c.issue < 0 || static_cast<std::size_t>(c.issue) >= n_issues)
      throw InternalError("verify: a case of issue " + std::to_string(c.issue) + " of " + std::to_string(n_issues));
    if (c.lead >= 1) by_issue[static_cast<std::size_t>(c.issue)].push_back(&c);
  }
  for (auto& seq : by_issue) std::sort(seq.begin(), seq.end(), [](auto a, auto b) { return a->lead < b->lead; });
  return by_issue;
}

// The end (index into seq) of the forecast run starting at seq[i]:
// consecutive leads on which the issue commits to seq[i]'s most likely
// state (i itself when it does not commit there).
std::size_t forecast_run_end(const std::vector<const Case*>& seq, std::size_t i, const CatchRule& rule) {
  const int r = seq[i]->most_likely;
  if (!rule.commits(*seq[i], r)) return i;
  std::size_t j = i;
  while (j + 1 < seq.size() && seq[j + 1]->lead == seq[j]->lead + 1 && rule.commits(*seq[j + 1], r)) ++j;
  return j;
}

}  // namespace

FalseAlarms find_false_alarms(const StateClimatology& climatology, const GuidanceSet& guidance, const Cases& cases,
                              int min_days, const CatchRule& rule) {
  const int k = static_cast<int>(climatology.states.size()) - 1;
  FalseAlarms alarms;
  alarms.by_regime.assign(static_cast<std::size_t>(k), 0);
  const auto by_issue = cases_by_issue(cases, guidance.issues.size());
  for (std::size_t g = 0; g < by_issue.size(); ++g) {
    const std::vector<const Case*>& seq = by_issue[g];
    for (std::size_t i = 0, j = 0; i < seq.size(); i = j + 1) {
      j = forecast_run_end(seq, i, rule);
      const int r = seq[i]->most_likely, len = static_cast<int>(j - i + 1);
      if (r >= k || len < min_days || !rule.commits(*seq[i], r)) continue;
      int match = 0;
      for (std::size_t q = i; q <= j; ++q) match += seq[q]->observed == r;
      if (2 * match >= len) continue;
      ++alarms.by_regime[static_cast<std::size_t>(r)];
      ++alarms.count;
      if (alarms.list.size() < FalseAlarms::kListed)
        alarms.list.push_back({{"issue_date", to_string(guidance.issues[g].issue)}, {"regime", climatology.states[r]},
                               {"from_lead_days", seq[i]->lead}, {"to_lead_days", seq[j]->lead},
                               {"observed_fraction", double(match) / len}});
    }
  }
  return alarms;
}

}  // namespace isohypse::verification
