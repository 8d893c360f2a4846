// Derive, step "the season": which days of the record fall in the season's
// months, and which of those follow the previous one.
#pragma once

#include <armadillo>
#include <vector>

#include "isohypse/base/calendar.hpp"

namespace isohypse::derive_steps {

struct Season {
  std::vector<arma::uword> days;  // column indices into the record, ascending
  std::vector<char> in_season;    // per day of the record: 1 in the season
  std::vector<Date> dates;        // the season's dates
  std::vector<char> next;         // per season day: follows the previous season day (consecutive_flags)

  std::size_t size() const { return days.size(); }
};

// The days of `dates` in `months` (1..12). Throws NumericalError when fewer
// than 10 days fall in the season.
Season select_season(const std::vector<Date>& dates, const std::vector<int>& months);

}  // namespace isohypse::derive_steps
