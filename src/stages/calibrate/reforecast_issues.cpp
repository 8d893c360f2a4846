#include "stages/calibrate/reforecast_issues.hpp"

#include <algorithm>
#include <set>

#include "isohypse/base/error.hpp"
#include "isohypse/io/reader.hpp"

namespace isohypse {

namespace {

// The first month of a season that wraps past December (its month whose
// predecessor is not in the season), or 0 when it does not wrap.
int wrap_start(const std::vector<int>& months) {
  const std::set<int> in(months.begin(), months.end());
  if (!in.count(12) || !in.count(1) || in.size() == 12) return 0;
  for (int m = 12; m >= 1; --m)
    if (in.count(m) && !in.count(m == 1 ? 12 : m - 1)) return m;
  return 0;
}

ReforecastIssue issue_of(const ReforecastSet& set, std::size_t latest, int lag_days, const Weighting& weights) {
  ReforecastIssue is;
  const Initialisation& last = set.inits[latest];
  is.issue = last.init_real;
  is.season_year = set.season_year[latest];
  for (std::size_t j = latest + 1; j-- > 0;) {
    const auto age = days_between(set.inits[j].init_real, is.issue);
    if (set.season_year[j] != is.season_year) break;  // sorted by date: the season year's start
    if (age < 0) continue;
    // Every one within the lag's days; past them, the next older one only
    // when the issue would otherwise pool one initialisation (within a week more).
    const bool within = age <= lag_days;
    if (!within && (is.inits.size() >= 2 || age > lag_days + 7)) break;
    is.inits.insert(is.inits.begin(), j);
    is.ages.insert(is.ages.begin(), static_cast<int>(age));
    if (!within) break;
  }
  is.weights = initialisation_weights(is.ages, weights);
  return is;
}

}  // namespace

int season_year(const RegimeModel& model, const Date& d) {
  const int start = wrap_start(model.months);
  return d.year + (start > 0 && d.month >= start ? 1 : 0);
}

ReforecastSet reforecast_set(const RegimeModel& model, const CalibrateConfig& cfg, const CalibrateProgress& report) {
  ReforecastSet set;
  set.files = expand_paths(cfg.reforecasts);
  report("scan reforecasts", 0, static_cast<int>(set.files.size()));
  set.inits = scan_forecasts(set.files, cfg.variable, model.domain, &model.grid);
  std::set<int> years;
  for (const auto& in : set.inits) {
    set.season_year.push_back(season_year(model, in.init_real));
    years.insert(set.season_year.back());
  }
  set.years.assign(years.begin(), years.end());
  if (static_cast<int>(set.years.size()) < kMinCalibrationYears)
    throw InputError("reforecasts (--reforecasts): " + std::to_string(set.inits.size()) +
                     " initialisations in " + std::to_string(set.years.size()) +
                     " season year(s); the calibration leaves one year out and needs at least " +
                     std::to_string(kMinCalibrationYears) + " years (first file " + set.files.front() + ")");
  for (const auto& in : set.inits)
    if (!in.native_grid.same_as(set.inits.front().native_grid))
      throw InputError(in.files.front() + ": its grid differs from that of " + set.inits.front().files.front() +
                       "; the reforecasts of one calibration share one grid");
  set.lag_days = cfg.lag_days > 0 ? cfg.lag_days : std::max(cfg.lag - 1, 0);
  for (std::size_t i = 0; i < set.inits.size(); ++i) set.issues.push_back(issue_of(set, i, set.lag_days, cfg.weights));
  set.regrid = Regridder(set.inits.front().native_grid, model.grid, set.inits.front().files.front());
  return set;
}

}  // namespace isohypse
