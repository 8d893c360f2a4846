// Calibrate, step 1: the reforecast issues. The reforecasts are scanned
// (metadata only) and grouped into season years; every reforecast
// initialisation date is an issue, whose lagged ensemble is the
// reforecasts of the same season year initialised within lag_days before
// it (as the daily stage pools the latest initialisations), widened back
// to the next older one of that season year when it holds only one, with
// the daily stage's age weights.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "isohypse/io/forecast.hpp"
#include "isohypse/stages/calibrate.hpp"

namespace isohypse {

struct ReforecastIssue {
  Date issue;                      // real calendar: the latest initialisation's date
  int season_year = 0;
  std::vector<std::size_t> inits;  // into ReforecastSet::inits, oldest first
  std::vector<int> ages;           // days before the issue date
  std::vector<double> weights;
};

struct ReforecastSet {
  ReforecastSet() = default;
  ReforecastSet(ReforecastSet&&) = default;
  ReforecastSet& operator=(ReforecastSet&&) = default;
  std::vector<std::string> files;
  std::vector<Initialisation> inits;  // by date
  std::vector<int> season_year;       // per initialisation
  std::vector<int> years;             // the distinct season years, ascending
  std::vector<ReforecastIssue> issues;
  int lag_days = 0;                   // as used
  Regridder regrid;                   // the reforecasts' grid onto the model's
};

// The season year of a date: its year, plus one when the model's season
// wraps past December and the date's month lies in the season's part before
// the new year (a November-March season's November 2000 is season 2001).
int season_year(const RegimeModel& model, const Date& d);

// Throws InputError naming the files when fewer than kMinCalibrationYears
// season years are found; scan_forecasts' errors otherwise.
ReforecastSet reforecast_set(const RegimeModel& model, const CalibrateConfig& cfg, const CalibrateProgress& report);

}  // namespace isohypse
