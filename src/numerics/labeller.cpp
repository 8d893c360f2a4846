#include "isohypse/numerics/labeller.hpp"

#include <algorithm>
#include <string>

#include "isohypse/numerics/climatology.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

RegimeLabeller::RegimeLabeller(const RegimeModel& model)
    : model_(model), weights_(arma::conv_to<arma::fvec>::from(model.weights)) {}

void RegimeLabeller::project(const arma::fmat& x, const arma::fmat* reference) {
  const arma::uword np = model_.eofs.n_rows, n = x.n_cols;
  if (x.n_rows != np)
    throw InternalError("regime labels: the fields have " + std::to_string(x.n_rows) + " grid points, the regime model " +
                     std::to_string(np));
  if (reference && (reference->n_rows != np || reference->n_cols != n))
    throw InternalError("regime labels: the reference has " + std::to_string(reference->n_rows) + " x " +
                     std::to_string(reference->n_cols) + " values for " + std::to_string(np) + " x " +
                     std::to_string(n) + " fields");
  // Anomaly and weight in float (as derive computes them), centred in
  // double, a block of days at a time: a long analysis record never gets a
  // double copy of its own.
  constexpr arma::uword kBlock = 256;
  const float* w = weights_.memptr();
  const double* mean = model_.eof_mean.memptr();
  pcs_.set_size(n, model_.eofs.n_cols);
  for (arma::uword c0 = 0; c0 < n; c0 += kBlock) {
    const arma::uword nb = std::min(kBlock, n - c0);
    weighted_.set_size(np, nb);
    for (arma::uword j = 0; j < nb; ++j) {
      const float* xt = x.colptr(c0 + j);
      double* b = weighted_.colptr(j);
      if (reference) {
        const float* r = reference->colptr(c0 + j);
        for (arma::uword i = 0; i < np; ++i) b[i] = static_cast<double>((xt[i] - r[i]) * w[i]) - mean[i];
      } else {
        for (arma::uword i = 0; i < np; ++i) b[i] = static_cast<double>(xt[i] * w[i]) - mean[i];
      }
    }
    pcs_.rows(c0, c0 + nb - 1) = weighted_.t() * model_.eofs;
  }
  // A NaN or Inf anywhere in a day's field leaves a NaN or Inf in its
  // components: checking these few numbers spares a pass over the fields.
  if (!pcs_.is_finite())
    throw DataError("regime labels: the anomalies hold NaN or Inf values (" + std::to_string(np) + " x " +
                    std::to_string(n) + ")");
}

std::vector<int> RegimeLabeller::assign(arma::vec* correlation) {
  std::vector<int> labels;
  arma::vec& cor = correlation ? *correlation : cor_;
  assign_regimes(pcs_, model_.centroids, model_.no_regime_threshold, labels, cor);
  for (int& l : labels)
    if (l < 0) l = model_.k();
  return labels;
}

std::vector<int> RegimeLabeller::label(const arma::fmat& anomalies, arma::vec* correlation) {
  project(anomalies, nullptr);
  return assign(correlation);
}

std::vector<int> RegimeLabeller::label(const arma::fmat& heights, const arma::fmat& reference,
                                       const std::vector<Date>& dates, int running_mean_days,
                                       arma::vec* correlation) {
  project(heights, &reference);
  if (running_mean_days > 1) {
    arma::mat by_day = pcs_.t();  // a column per day
    running_mean(by_day, dates, running_mean_days);
    pcs_ = by_day.t();
  }
  return assign(correlation);
}

}  // namespace isohypse
