// Daily climatology of 500 hPa heights and anomalies from it.
//
// Per grid point, least squares on every available day of the record (missing
// days and NaN values are left out) of
//   h(t) = a0 + sum_{n=1..H} [a_n cos(2 pi n f) + b_n sin(2 pi n f)] (+ c t)
// with f = (day_of_year - 1) / days_in_year in the date's own calendar, so the
// same climatology serves noleap or 360_day model dates, and t the real-time
// day count from `trend_origin` when a linear trend is removed. Mean plus the
// first 3 annual harmonics is common practice (see ../shared/METHODS.md §1).
#pragma once

#include <armadillo>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/field.hpp"

namespace isohypse {

struct ClimatologyOptions {
  int harmonics = 3;      // 0..6
  bool detrend = false;   // also fit and remove a linear trend in time
};

struct Climatology {
  int harmonics = 3;
  bool detrend = false;
  Date trend_origin;              // t = 0 of the trend (real calendar)
  arma::mat coefficients;         // n_points x (1 + 2H [+1]): a0, a1, b1, ..., aH, bH [, c per day]

  // The basis for one date (length 1 + 2H [+1]).
  arma::rowvec basis(const Date& d) const;
  // Climatological heights for `dates` (n_points x n_dates).
  arma::fmat evaluate(const std::vector<Date>& dates) const;
};

// Fits the climatology; throws NumericalError when a grid point has too few
// valid days for the number of coefficients (naming the point).
Climatology fit_climatology(const Field& heights, const ClimatologyOptions& options);

// heights - climatology, in place (NaN stays NaN).
void subtract_climatology(Field& heights, const Climatology& clim);

// The days averaged for day t by running_mean: dates lo..hi (indices,
// inclusive), t - (N-1)/2 .. t + N/2 cut to t's run of consecutive days.
struct MeanWindow {
  arma::uword lo = 0, hi = 0;
};
// One window per date; N <= 1 gives each day alone.
std::vector<MeanWindow> running_mean_windows(const std::vector<Date>& dates, int days);

// Centred N-day running mean within each run of consecutive days (shorter
// windows at the ends of a run); N <= 1 leaves the data unchanged. NaN
// values are skipped in the averages.
// values: n x n_dates (a column per date).
void running_mean(arma::fmat& values, const std::vector<Date>& dates, int days);
void running_mean(arma::mat& values, const std::vector<Date>& dates, int days);

}  // namespace isohypse
