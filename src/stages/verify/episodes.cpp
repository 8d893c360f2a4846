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

// The issues that saw the onset of `run` (lead 1 day or more), by lead.
std::vector<const Case*> cases_at_onset(const ObservedRun& run, const CaseAt& at, std::size_t n_issues) {
  std::vector<const Case*> seen;
  for (std::size_t g = 0; g < n_issues; ++g) {
    auto it = at.find({static_cast<int>(g), run.onset});
    if (it != at.end() && it->second->lead >= 1) seen.push_back(it->second);
  }
  std::sort(seen.begin(), seen.end(), [](const Case* a, const Case* b) { return a->lead < b->lead; });
  return seen;
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

bool CatchRule::commits(const Case& c, int state) const {
  if (c.most_likely != state) return false;
  double second = 0.0;
  for (arma::uword s = 0; s < c.p.n_elem; ++s)
    if (static_cast<int>(s) != state) second = std::max(second, c.p(s));
  return c.p(state) - second >= margin - 1e-12 && c.p(state) - climatology.reference(c.month)(state) >= excess - 1e-12;
}

namespace {

// One scored episode: who saw its onset, who caught it, from which lead on
// the guidance committed and never dropped it.
json scored_episode(const ObservedRun& run, const std::vector<const Case*>& seen, const GuidanceSet& guidance,
                    const CatchRule& rule) {
  json caught_at = json::array();
  int longest = -1, committed = -1;
  bool holding = true;  // every shorter lead so far caught it
  for (const Case* c : seen) {
    const bool caught = rule.commits(*c, run.state);
    holding = holding && caught;
    if (holding) committed = c->lead;
    if (!caught) continue;
    longest = std::max(longest, c->lead);
    caught_at.push_back(
        {{"issue_date", to_string(guidance.issues[static_cast<std::size_t>(c->issue)].issue)}, {"lead_days", c->lead}});
  }
  return {{"issues", seen.size()},
          {"caught", longest >= 1},
          {"longest_lead_days", longest >= 1 ? json(longest) : json()},
          {"committed_lead_days", committed >= 1 ? json(committed) : json()},
          {"caught_at", caught_at}};
}

}  // namespace

Episodes find_episodes(const RegimeModel& model, const StateClimatology& climatology, const Cases& cases,
                       const GuidanceSet& guidance, int min_days, const CatchRule& rule) {
  const int k = model.k();
  if (climatology.states.size() != static_cast<std::size_t>(k) + 1 ||
      rule.climatology.frequency.n_elem != climatology.states.size())
    throw InternalError("verify: " + std::to_string(climatology.states.size()) + " states for " +
                        std::to_string(k) + " regimes");
  const CaseAt at = case_at(cases);
  const std::int64_t first_day = cases.observed.empty() ? 0 : cases.observed.begin()->first;
  Episodes episodes;
  for (const ObservedRun& run : observed_runs(cases.observed)) {
    if (run.state == k || run.days < min_days) continue;
    if (run.onset == first_day) {  // under way before the period: its onset is not known
      ++episodes.under_way;
      continue;
    }
    const std::vector<const Case*> seen = cases_at_onset(run, at, guidance.issues.size());
    if (seen.empty()) {
      ++episodes.unseen;
      continue;
    }
    json e = {{"regime", climatology.states[run.state]}, {"name", model.regimes[run.state].name},
              {"onset", date_of(run.onset)},             {"end", date_of(run.end)},
              {"days", run.days}};
    e.update(scored_episode(run, seen, guidance, rule));
    (e["caught"].get<bool>() ? episodes.caught : episodes.missed)++;
    episodes.list.push_back(std::move(e));
  }
  return episodes;
}

}  // namespace isohypse::verification
