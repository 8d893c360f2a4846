#include "stages/verify/episodes.hpp"

#include <algorithm>
#include <limits>
#include <map>
#include <utility>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse::verification {

namespace {

using json = nlohmann::json;

// The case of each issue on each valid day (the last daily entry where an
// issue repeats a valid date).
using CaseAt = std::map<std::pair<int, std::int64_t>, const Case*>;

CaseAt case_at(const Cases& cases) {
  CaseAt at;
  for (const Case& c : cases.list) at[{c.issue, c.valid}] = &c;
  return at;
}

// The longest lead (days, at least 1) of guidance that caught the onset of
// `run`, or -1 when none did.
int longest_lead_caught(const ObservedRun& run, const CaseAt& at, std::size_t n_issues) {
  int longest = -1;
  for (std::size_t g = 0; g < n_issues; ++g) {
    auto it = at.find({static_cast<int>(g), run.onset});
    if (it == at.end() || it->second->lead < 1) continue;
    const Case& c = *it->second;
    if (c.most_likely == run.state || c.p(run.state) >= 0.5) longest = std::max(longest, c.lead);
  }
  return longest;
}

std::string date_of(std::int64_t day) { return to_string(from_day_number(day, Calendar::ProlepticGregorian)); }

}  // namespace

std::vector<ObservedRun> observed_runs(const ObservedDays& observed) {
  std::vector<ObservedRun> runs;
  for (const auto& [day, state] : observed) {
    if (!runs.empty() && day == runs.back().end + 1 && state == runs.back().state) {
      runs.back().end = day;
      ++runs.back().days;
    } else {
      runs.push_back({state, day, day, 1});
    }
  }
  return runs;
}

Episodes find_episodes(const RegimeModel& model, const StateClimatology& climatology, const Cases& cases,
                       std::size_t n_issues, int min_days) {
  const int k = model.k();
  if (climatology.states.size() != static_cast<std::size_t>(k) + 1)
    throw InternalError("verify: " + std::to_string(climatology.states.size()) + " states for " +
                        std::to_string(k) + " regimes");
  const CaseAt at = case_at(cases);
  Episodes episodes;
  for (const ObservedRun& run : observed_runs(cases.observed)) {
    if (run.state == k || run.days < min_days) continue;
    const int longest = longest_lead_caught(run, at, n_issues);
    (longest >= 1 ? episodes.caught : episodes.missed)++;
    episodes.list.push_back({{"regime", climatology.states[run.state]},
                             {"name", model.regimes[run.state].name},
                             {"onset", date_of(run.onset)},
                             {"end", date_of(run.end)},
                             {"days", run.days},
                             {"caught", longest >= 1},
                             {"longest_lead_days", longest >= 1 ? json(longest) : json()}});
  }
  return episodes;
}

}  // namespace isohypse::verification
