#include "isohypse/numerics/empirical_persistence.hpp"

#include <limits>
#include <string>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

SeasonRecord season_record(const RegimeModel& model) {
  const std::size_t n = model.dates.size();
  if (model.labels.size() != n || model.in_season.size() != n)
    throw DataError(model.path + ": the record holds " + std::to_string(n) + " dates, " +
                    std::to_string(model.labels.size()) + " labels and " + std::to_string(model.in_season.size()) +
                    " in-season flags; expected one of each per day");
  const int k = model.k();
  SeasonRecord r;
  std::size_t previous = n;  // index of the previous in-season day; n = none yet
  for (std::size_t t = 0; t < n; ++t) {
    const int label = model.labels[t];
    if (label < -1 || label >= k)
      throw DataError(model.path + ": label " + std::to_string(label) + " on " + to_string(model.dates[t]) +
                      "; expected -1 (no regime) or 0.." + std::to_string(k - 1));
    if (!model.in_season[t]) continue;
    // An out-of-season day between two in-season days is a season break.
    const bool next_day = previous != n && previous + 1 == t && add_days(model.dates[previous], 1) == model.dates[t];
    r.states.push_back(label < 0 ? k : label);
    r.consecutive.push_back(next_day ? 1 : 0);
    previous = t;
  }
  return r;
}

double LastingCount::probability() const {
  return cases > 0 ? static_cast<double>(lasted) / cases : std::numeric_limits<double>::quiet_NaN();
}

LastingCount lasting_count(const std::vector<int>& states, const std::vector<char>& consecutive, int state, int n,
                           int age_days) {
  if (states.size() != consecutive.size())
    throw InternalError("lasting_count: " + std::to_string(states.size()) + " states but " +
                        std::to_string(consecutive.size()) + " consecutive flags; expected equal lengths");
  if (n < 1) throw InternalError("lasting_count: horizon " + std::to_string(n) + " days; expected >= 1");
  if (age_days < 0) throw InternalError("lasting_count: age " + std::to_string(age_days) + " days; expected >= 0");
  if (state < 0) throw InternalError("lasting_count: state " + std::to_string(state) + "; expected >= 0");
  const std::size_t len = states.size(), horizon = static_cast<std::size_t>(n);
  LastingCount c;
  int age = 0;
  // The following days a horizon may use run up to reach_end (exclusive): the
  // first later day after a gap, a season break or a missing label. Scanned
  // ahead from where the last scan stopped, so the loop is linear in len.
  std::size_t reach_end = 0;
  for (std::size_t t = 0; t < len; ++t) {
    const bool continues = t > 0 && consecutive[t] && states[t] >= 0 && states[t] == states[t - 1];
    age = continues ? age + 1 : 1;
    if (reach_end <= t) reach_end = t + 1;
    while (reach_end < len && consecutive[reach_end] && states[reach_end] >= 0) ++reach_end;
    if (states[t] != state || reach_end - t - 1 < horizon) continue;
    if (age_days > 0 && age != age_days) continue;
    bool held = true;
    for (std::size_t j = t + 1; j <= t + horizon && held; ++j) held = states[j] == state;
    ++c.cases;
    if (held) ++c.lasted;
  }
  return c;
}

EmpiricalLasting empirical_lasting(const std::vector<int>& states, const std::vector<char>& consecutive, int state,
                                   int n, int age_days, int min_cases) {
  if (min_cases < 1)
    throw InternalError("empirical_lasting: min_cases " + std::to_string(min_cases) + "; expected >= 1");
  EmpiricalLasting out;
  if (age_days > 0) {
    const LastingCount aged = lasting_count(states, consecutive, state, n, age_days);
    out.age_cases = aged.cases;
    if (aged.cases >= min_cases) {
      out.probability = aged.probability();
      out.cases = aged.cases;
      out.age_days = age_days;
      return out;
    }
  }
  const LastingCount all = lasting_count(states, consecutive, state, n);
  out.probability = all.probability();
  out.cases = all.cases;
  return out;
}

}  // namespace isohypse
