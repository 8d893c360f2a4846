// The forecast model's mean drift by lead, removed without replacing the
// reference climate (../shared/METHODS.md §8, "mean-drift removal that keeps
// the reference climate"; common practice).
//
// A reforecast member started on date i is F = C(valid) + anomaly + drift(lead)
// + the difference between the reforecast years' climate and C, where C is
// the regime model's climatology (with its trend when the model was derived
// with one). The anomalies of a forecast must be comparable with the
// observed anomalies O - C(valid) that the regimes were derived from, so
// only the drift is taken out:
//   drift(lead)     = mean over the reforecast members of [F - C(their valid date)]
//   anomaly         = F - C(valid) - drift(lead)
//                   = F - Rbar(lead) - [C(valid) - mean of C over the reforecasts' valid dates]
// with Rbar the reforecast mean. The bracket is what keeps the climate: a
// forecast for a later (warmer) year than the reforecasts keeps its warmth
// when C has a trend, and a reforecast set of other years than the model's
// record does not shift the anomalies by the difference of the periods.
// (METHODS.md §8 writes the bracket with a plus sign; the derivation above
// and tests/python/test_drift_climate.py, a planted world whose reforecast
// years are warmer than the record, show that it is subtracted.)
#pragma once

#include <armadillo>
#include <cstddef>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/numerics/climatology.hpp"

namespace isohypse {

// The members of one reforecast initialisation: the sum over its members of
// [F - C(valid date)], n_points x n_leads (lead 0 first), and how many.
struct DriftSum {
  arma::fmat difference;
  std::size_t members = 0;
};

// Adds one member's heights (n_points x n_leads) to `sum`, given C at the
// initialisation's valid dates (the same size). Throws InternalError when
// the sizes differ.
void add_member(DriftSum& sum, const arma::fmat& heights, const arma::fmat& climate_at_valid);

// The mean drift over lead days 0..leads-1 (leads = lead_dates.size()):
// the member-weighted mean of parts' differences, smoothed with a centred
// running mean of smoothing_days along the lead days (lead_dates: the
// forecast's valid dates, consecutive), n_points x leads. What a
// forecast's heights are then compared with is C(valid) + this drift.
// Throws InternalError when parts holds no member, or a part has other
// rows than n_points or fewer lead days than needed.
arma::fmat mean_drift(const std::vector<const DriftSum*>& parts, arma::uword n_points,
                      const std::vector<Date>& lead_dates, int smoothing_days);

// The same from a total already formed: `total` (n_points x at least
// lead_dates.size() lead days, summed in double) over `members` members.
// Throws InternalError when members is 0 or the total is too short.
arma::fmat mean_drift(const arma::mat& total, std::size_t members, const std::vector<Date>& lead_dates,
                      int smoothing_days);

}  // namespace isohypse
