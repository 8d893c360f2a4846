// Reading a record of daily 500 hPa heights from a list or glob of files (one
// per year is usual): ordered and joined in time, duplicates and gaps
// reported, only the domain and level read (hyperslabs), sub-daily steps
// averaged to daily means when asked.
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/field.hpp"

namespace isohypse {

// Expands shell-style globs (*, ?, [..]) itself, so quoted patterns work.
// A plain path is kept as given (a missing one is reported by the reader,
// by name); a pattern that matches nothing throws InputError naming it.
// Results are sorted within each pattern and de-duplicated.
std::vector<std::string> expand_paths(const std::vector<std::string>& patterns);

struct ReadOptions {
  std::string variable;          // empty: automatic
  double level_hpa = 500.0;
  std::optional<Domain> domain;  // empty: the whole grid
  bool daily_means = false;      // average sub-daily steps; without it a sub-daily file is refused
  std::optional<Date> from, to;  // keep only days in [from, to] (inclusive), in the files' calendar
};

struct ReadReport {
  std::vector<std::string> files;
  Calendar calendar = Calendar::Standard;
  int steps_per_day = 1;
  std::vector<Date> duplicates;                 // dates found more than once (first kept)
  std::vector<std::pair<Date, Date>> gaps;      // first and last missing day of each gap
  std::size_t missing_days = 0;
  std::size_t missing_values = 0;               // NaN values in the returned field
};

// Reads heights in metres for the domain. Every file must share the grid,
// variable and calendar (a file that differs is named). Throws InputError or
// DataError naming the file; DataError when the domain is all missing.
// `progress` (optional) is called after each file with (done, total).
Field read_heights(const std::vector<std::string>& paths, const ReadOptions& options, ReadReport* report = nullptr,
                   const std::function<void(std::size_t, std::size_t)>& progress = {});

}  // namespace isohypse
