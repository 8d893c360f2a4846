#include "isohypse/numerics/model_drift.hpp"

#include <string>

#include "isohypse/base/error.hpp"

namespace isohypse {

void add_member(DriftSum& sum, const arma::fmat& heights, const arma::fmat& climate_at_valid) {
  if (heights.n_rows != climate_at_valid.n_rows || heights.n_cols != climate_at_valid.n_cols)
    throw InternalError("add_member: heights " + std::to_string(heights.n_rows) + " x " +
                        std::to_string(heights.n_cols) + " against a climatology of " +
                        std::to_string(climate_at_valid.n_rows) + " x " + std::to_string(climate_at_valid.n_cols));
  if (sum.difference.is_empty()) sum.difference.zeros(heights.n_rows, heights.n_cols);
  if (sum.difference.n_rows != heights.n_rows || sum.difference.n_cols != heights.n_cols)
    throw InternalError("add_member: a member of " + std::to_string(heights.n_cols) +
                        " lead days added to a sum of " + std::to_string(sum.difference.n_cols));
  sum.difference += heights - climate_at_valid;
  ++sum.members;
}

arma::fmat mean_drift(const std::vector<const DriftSum*>& parts, arma::uword n_points,
                      const std::vector<Date>& lead_dates, int smoothing_days) {
  const arma::uword leads = lead_dates.size();
  arma::mat total(n_points, leads, arma::fill::zeros);
  std::size_t members = 0;
  for (const DriftSum* p : parts) {
    if (p->members == 0) continue;
    if (p->difference.n_rows != n_points || p->difference.n_cols < leads)
      throw InternalError("mean_drift: a reforecast sum of " + std::to_string(p->difference.n_rows) + " x " +
                          std::to_string(p->difference.n_cols) + " for " + std::to_string(n_points) +
                          " points x " + std::to_string(leads) + " lead days");
    total += arma::conv_to<arma::mat>::from(p->difference.cols(0, leads - 1));
    members += p->members;
  }
  return mean_drift(total, members, lead_dates, smoothing_days);
}

arma::fmat mean_drift(const arma::mat& total, std::size_t members, const std::vector<Date>& lead_dates,
                      int smoothing_days) {
  const arma::uword leads = lead_dates.size();
  if (members == 0) throw InternalError("mean_drift: no reforecast member to estimate the drift from");
  if (total.n_cols < leads)
    throw InternalError("mean_drift: a total of " + std::to_string(total.n_cols) + " lead days for " +
                        std::to_string(leads));
  arma::fmat drift = arma::conv_to<arma::fmat>::from(total.cols(0, leads - 1) / static_cast<double>(members));
  running_mean(drift, lead_dates, smoothing_days);
  return drift;
}

}  // namespace isohypse
