#include "stages/verify/verification_cases.hpp"

#include <algorithm>
#include <limits>

#include "isohypse/base/error.hpp"

namespace isohypse::verification {

namespace {

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

[[noreturn]] void no_cases(const ObservedSequence& observed, const VerifyConfig& config) {
  throw InputError("no observations for the valid dates of the guidance" +
                   std::string(config.from || config.to ? " in the period asked" : "") + " (observations from " +
                   observed.source +
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

StateClimatology state_climatology(const RegimeModel& model) {
  const int k = model.k();
  StateClimatology c;
  c.states = model_states(model);
  c.frequency.set_size(k + 1);
  double regime_sum = 0;
  for (int r = 0; r < k; ++r) regime_sum += (c.frequency(r) = model.regimes[r].frequency);
  c.frequency(k) = std::max(0.0, 1.0 - regime_sum);
  return c;
}

Cases build_cases(const GuidanceSet& guidance, const ObservedSequence& observed, std::size_t n_states,
                  const VerifyConfig& config) {
  const ObservedDays by_day = observed_by_day(observed, n_states);
  const std::int64_t from = config.from ? day_number(*config.from) : std::numeric_limits<std::int64_t>::min();
  const std::int64_t to = config.to ? day_number(*config.to) : std::numeric_limits<std::int64_t>::max();
  Cases cases;
  for (std::size_t g = 0; g < guidance.issues.size(); ++g)
    for (const DailyGuidance& d : guidance.issues[g].daily) {
      const std::int64_t dn = day_number(d.valid);
      if (dn < from || dn > to) continue;
      auto it = by_day.find(dn);
      if (it == by_day.end()) continue;
      if (d.p.n_elem != n_states)
        throw InternalError("verify: " + std::to_string(d.p.n_elem) + " probabilities for " +
                            std::to_string(n_states) + " states in " + guidance.issues[g].file);
      cases.list.push_back({static_cast<int>(g), d.lead, dn, d.valid.month, d.p, d.most_likely, it->second,
                            day_number(guidance.issues[g].issue)});
      cases.lag_span_days = std::max(cases.lag_span_days, guidance.issues[g].lag_span_days);
      cases.max_lead = std::max(cases.max_lead, d.lead);
    }
  if (cases.list.empty()) no_cases(observed, config);
  auto [first, last] = std::minmax_element(cases.list.begin(), cases.list.end(),
                                           [](const Case& a, const Case& b) { return a.valid < b.valid; });
  cases.first_valid = first->valid;
  cases.last_valid = last->valid;
  cases.observed = observed_in_period(by_day, cases.first_valid, cases.last_valid);
  return cases;
}

}  // namespace isohypse::verification
