// Regime labels of anomaly fields with a regime model: the model's
// sqrt(cos lat) weights, minus its EOF mean, projected onto its EOFs
// (pc_j = sum_s (w_s x_s - m_s) e_js), the nearest centroid in component
// space, and "no regime" where the uncentred correlation with that centroid
// is below the model's threshold (../shared/METHODS.md §4; the threshold on
// the correlation is common practice). The correlation follows the model's
// NoRegimeRule (regime_model.hpp): over the full weighted field for models
// of format version 2, in EOF space for version 1 models.
//
// A labeller keeps its work buffers, so labelling member after member reuses
// the same memory instead of fresh pages each time. One labeller per thread.
#pragma once

#include <armadillo>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

class RegimeLabeller {
public:
  explicit RegimeLabeller(const RegimeModel& model);

  // anomalies: n_points x n_days in metres on the model grid, finite (a NaN
  // or Inf is refused with DataError). Returns a label per day, 0..k-1 or k
  // for no regime; `correlation`, if given, receives the correlation with
  // the nearest centroid per day.
  std::vector<int> label(const arma::fmat& anomalies, arma::vec* correlation = nullptr);

  // The same for the anomalies heights - reference (both n_points x n_days)
  // after the model's centred running mean of `running_mean_days` over
  // `dates` (climatology.hpp's running_mean). The mean is taken on the
  // components: both steps are linear, so this equals projecting the
  // smoothed fields, and it spares two passes over them. The full-field
  // norm of a smoothed day comes from the dot products of the weighted
  // fields of the days in its window (|mean y|^2 = sum_s,s' y_s . y_s' / n^2).
  std::vector<int> label(const arma::fmat& heights, const arma::fmat& reference, const std::vector<Date>& dates,
                         int running_mean_days, arma::vec* correlation = nullptr);

  // The principal components of the last label() call, n_days x n_eof.
  const arma::mat& components() const { return pcs_; }
  // The weighted full-field norms |w x - m| (metres) of the last label()
  // call's days (after the running mean, if any), n_days.
  const arma::vec& field_norms() const { return norms_; }

private:
  void project(const arma::fmat& x, const arma::fmat* reference, arma::uword max_lag);
  void weigh_block(const arma::fmat& x, const arma::fmat* reference, arma::uword c0, arma::uword nb,
                   arma::uword max_lag);
  void smooth(const std::vector<Date>& dates, int days);
  std::vector<int> assign(arma::vec* correlation);

  const RegimeModel& model_;
  arma::fvec weights_;   // float, as the anomalies are multiplied in float
  // n_points x (max_lag + a block of days): w x - m in double, the block
  // after the previous block's last max_lag days (for the lag products).
  arma::mat weighted_;
  arma::mat lags_;       // (max_lag + 1) x n_days: lags_(L, t) = y_t . y_(t-L)
  arma::mat pcs_;
  arma::vec norms_;
  arma::vec cor_;
};

}  // namespace isohypse
