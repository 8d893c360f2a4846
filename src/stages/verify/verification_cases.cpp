#include "stages/verify/verification_cases.hpp"

#include <nlohmann/json.hpp>

#include <algorithm>
#include <limits>
#include <optional>
#include <string>

#include "isohypse/base/error.hpp"

namespace isohypse::verification {

namespace {

using json = nlohmann::json;

ObservedDays observed_by_day(const ObservedSequence& observed, std::size_t n_states) {
  if (observed.labels.size() != observed.dates.size())
    throw InternalError("verify: " + std::to_string(observed.labels.size()) + " observed labels for " +
                        std::to_string(observed.dates.size()) + " dates");
  ObservedDays by_day;
  for (std::size_t t = 0; t < observed.dates.size(); ++t) {
    const int label = observed.labels[t];
    if (label < 0 || static_cast<std::size_t>(label) >= n_states)
      throw InternalError("verify: observed label " + std::to_string(label) + " on " + to_string(observed.dates[t]) +
                          " outside 0.." + std::to_string(n_states - 1));
    by_day[day_number(observed.dates[t])] = label;
  }
  return by_day;
}

// "YYYY-MM-DD" of a day number, or "(open)".
std::string day_text(std::optional<Date> d) { return d ? to_string(*d) : std::string("(open)"); }

// Why no case was formed: no guidance valid in the period asked, or no
// observation for the valid dates that are there.
[[noreturn]] void no_cases(const GuidanceSet& guidance, const ObservedSequence& observed, const VerifyConfig& config,
                           std::size_t valid_in_period) {
  const std::string period = "between " + day_text(config.from) + " and " + day_text(config.to);
  if (valid_in_period == 0) {
    std::optional<Date> first, last;
    for (const auto& issue : guidance.issues)
      for (const DailyGuidance& d : issue.daily) {
        if (!first || day_number(d.valid) < day_number(*first)) first = d.valid;
        if (!last || day_number(d.valid) > day_number(*last)) last = d.valid;
      }
    throw InputError("no guidance valid " + period + " (the guidance covers " +
                     (first ? to_string(*first) + " to " + to_string(*last) : std::string("no dates")) + ")");
  }
  throw InputError("no observations " + (config.from || config.to ? period : std::string("for the valid dates")) +
                   " of the guidance (observations from " + observed.source +
                   (observed.dates.empty()
                        ? ": none"
                        : " cover " + to_string(observed.dates.front()) + " to " + to_string(observed.dates.back())) +
                   "); give --observed files for the season");
}

// The observed days of the period the cases cover.
ObservedDays observed_in_period(const ObservedDays& by_day, std::int64_t first, std::int64_t last) {
  return ObservedDays(by_day.lower_bound(first), by_day.upper_bound(last));
}

}  // namespace

Cases build_cases(const GuidanceSet& guidance, const ObservedSequence& observed, std::size_t n_states,
                  const VerifyConfig& config, const std::vector<int>& season_months) {
  auto in_season = [&](int month) {
    return season_months.empty() || std::find(season_months.begin(), season_months.end(), month) != season_months.end();
  };
  const ObservedDays by_day = observed_by_day(observed, n_states);
  const std::int64_t from = config.from ? day_number(*config.from) : std::numeric_limits<std::int64_t>::min();
  const std::int64_t to = config.to ? day_number(*config.to) : std::numeric_limits<std::int64_t>::max();
  Cases cases;
  std::size_t valid_in_period = 0;
  for (std::size_t g = 0; g < guidance.issues.size(); ++g)
    for (const DailyGuidance& d : guidance.issues[g].daily) {
      const std::int64_t dn = day_number(d.valid);
      if (dn < from || dn > to) continue;
      ++valid_in_period;
      auto it = by_day.find(dn);
      if (it == by_day.end()) continue;
      if (!in_season(d.valid.month)) {
        ++cases.out_of_season[d.valid.month];
        if (!config.all_months) continue;  // scored only against monthly climatology (state_climatology.hpp)
      }
      if (d.p.n_elem != n_states)
        throw InternalError("verify: " + std::to_string(d.p.n_elem) + " probabilities for " +
                            std::to_string(n_states) + " states in " + guidance.issues[g].file);
      cases.list.push_back({static_cast<int>(g), d.lead, dn, d.valid.month, d.p, d.most_likely, it->second,
                            day_number(guidance.issues[g].issue), d.raw_p, d.raw_most_likely});
      cases.lag_span_days = std::max(cases.lag_span_days, guidance.issues[g].lag_span_days);
      cases.max_lead = std::max(cases.max_lead, d.lead);
    }
  if (cases.list.empty() && !cases.out_of_season.empty())
    throw InputError("every observed day of guidance " +
                     (config.from || config.to ? "between " + day_text(config.from) + " and " + day_text(config.to)
                                               : std::string("given")) +
                     " lies outside the regime model's season (" + json(season_months).dump() +
                     "): nothing to score");
  if (cases.list.empty()) no_cases(guidance, observed, config, valid_in_period);
  auto [first, last] = std::minmax_element(cases.list.begin(), cases.list.end(),
                                           [](const Case& a, const Case& b) { return a.valid < b.valid; });
  cases.first_valid = first->valid;
  cases.last_valid = last->valid;
  cases.observed = observed_in_period(by_day, cases.first_valid, cases.last_valid);
  return cases;
}

}  // namespace isohypse::verification
