#include "stages/derive/season.hpp"

#include <nlohmann/json.hpp>
#include <set>
#include <string>

#include "isohypse/base/error.hpp"
#include "isohypse/base/field.hpp"

namespace isohypse::derive_steps {

Season select_season(const std::vector<Date>& dates, const std::vector<int>& months) {
  const std::set<int> wanted(months.begin(), months.end());
  Season s;
  s.in_season.assign(dates.size(), 0);
  for (std::size_t t = 0; t < dates.size(); ++t)
    if (wanted.count(dates[t].month)) {
      s.days.push_back(t);
      s.in_season[t] = 1;
    }
  if (s.days.size() < 10)
    throw NumericalError("only " + std::to_string(s.days.size()) + " days of the record fall in the season (months " +
                         nlohmann::json(months).dump() + "); at least 10 are needed");
  for (auto t : s.days) s.dates.push_back(dates[t]);
  s.next = consecutive_flags(s.dates);
  return s;
}

}  // namespace isohypse::derive_steps
