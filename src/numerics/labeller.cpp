#include "isohypse/numerics/labeller.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "isohypse/numerics/climatology.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

constexpr arma::uword kBlock = 256;  // days weighted and projected at a time

// a . b over n values. Armadillo hands a long dot product to BLAS, whose
// vectorised kernel costs a fraction of the weighting pass; a plain loop
// would be one chain of dependent additions (floating-point sums are not
// reordered for vectors without -ffast-math).
double dot(double* a, double* b, arma::uword n) {
  return arma::dot(arma::vec(a, n, false, true), arma::vec(b, n, false, true));
}

}  // namespace

RegimeLabeller::RegimeLabeller(const RegimeModel& model)
    : model_(model), weights_(arma::conv_to<arma::fvec>::from(model.weights)) {}

void RegimeLabeller::weigh_block(const arma::fmat& x, const arma::fmat* reference, arma::uword c0, arma::uword nb,
                                 arma::uword max_lag) {
  const arma::uword np = x.n_rows;
  const float* w = weights_.memptr();
  const double* mean = model_.eof_mean.memptr();
  for (arma::uword j = 0; j < nb; ++j) {
    const arma::uword t = c0 + j;
    const float* xt = x.colptr(t);
    double* b = weighted_.colptr(max_lag + j);
    if (reference) {
      const float* r = reference->colptr(t);
      for (arma::uword i = 0; i < np; ++i) b[i] = static_cast<double>((xt[i] - r[i]) * w[i]) - mean[i];
    } else {
      for (arma::uword i = 0; i < np; ++i) b[i] = static_cast<double>(xt[i] * w[i]) - mean[i];
    }
    // The day's squared norm and its products with the days before it that
    // can share a running-mean window; the columns are still in cache.
    for (arma::uword lag = 0; lag <= max_lag && lag <= t; ++lag) lags_(lag, t) = dot(b, b - lag * np, np);
  }
}

void RegimeLabeller::project(const arma::fmat& x, const arma::fmat* reference, arma::uword max_lag) {
  const arma::uword np = model_.eofs.n_rows, n = x.n_cols;
  if (x.n_rows != np)
    throw InternalError("regime labels: the fields have " + std::to_string(x.n_rows) + " grid points, the regime model " +
                     std::to_string(np));
  if (reference && (reference->n_rows != np || reference->n_cols != n))
    throw InternalError("regime labels: the reference has " + std::to_string(reference->n_rows) + " x " +
                     std::to_string(reference->n_cols) + " values for " + std::to_string(np) + " x " +
                     std::to_string(n) + " fields");
  if (max_lag >= kBlock) throw InternalError("regime labels: a running mean of more than 256 days");
  // Anomaly and weight in float (as derive computes them), centred in
  // double, a block of days at a time: a long analysis record never gets a
  // double copy of its own. The buffer only grows, so labelling member
  // after member reuses it.
  const arma::uword width = max_lag + std::min(kBlock, n);
  if (weighted_.n_rows != np || weighted_.n_cols < width) weighted_.set_size(np, width);
  pcs_.set_size(n, model_.eofs.n_cols);
  lags_.zeros(max_lag + 1, n);
  for (arma::uword c0 = 0; c0 < n; c0 += kBlock) {
    const arma::uword nb = std::min(kBlock, n - c0);
    weigh_block(x, reference, c0, nb, max_lag);
    const arma::mat block(weighted_.colptr(max_lag), np, nb, false, true);
    pcs_.rows(c0, c0 + nb - 1) = block.t() * model_.eofs;
    // The block's last max_lag days go before the next block (nb = kBlock
    // > max_lag whenever one follows).
    if (max_lag > 0 && c0 + nb < n) std::copy_n(weighted_.colptr(nb), max_lag * np, weighted_.colptr(0));
  }
  // A NaN or Inf anywhere in a day's field leaves a NaN or Inf in its
  // components: checking these few numbers spares a pass over the fields.
  if (!pcs_.is_finite())
    throw DataError("regime labels: the anomalies hold NaN or Inf values (" + std::to_string(np) + " x " +
                    std::to_string(n) + ")");
  norms_ = arma::sqrt(lags_.row(0).t());
}

void RegimeLabeller::smooth(const std::vector<Date>& dates, int days) {
  if (dates.size() != pcs_.n_rows)
    throw InternalError("regime labels: " + std::to_string(dates.size()) + " dates for " +
                        std::to_string(pcs_.n_rows) + " fields");
  arma::mat by_day = pcs_.t();  // a column per day
  running_mean(by_day, dates, days);
  pcs_ = by_day.t();
  // |mean of y_s|^2 over the window = the sum of all y_s . y_s' / n^2; the
  // window spans at most `days` days, so lags up to days - 1 suffice.
  const std::vector<MeanWindow> windows = running_mean_windows(dates, days);
  for (arma::uword t = 0; t < windows.size(); ++t) {
    const auto [lo, hi] = windows[t];
    double s = 0;
    for (arma::uword a = lo; a <= hi; ++a) {
      s += lags_(0, a);
      for (arma::uword b = lo; b < a; ++b) s += 2 * lags_(a - b, a);
    }
    const double count = static_cast<double>(hi - lo + 1);
    norms_(t) = std::sqrt(std::max(0.0, s)) / count;  // rounding can leave -0 for a zero field
  }
}

std::vector<int> RegimeLabeller::assign(arma::vec* correlation) {
  std::vector<int> labels;
  arma::vec& cor = correlation ? *correlation : cor_;
  assign_regimes(model_, pcs_, norms_, labels, cor);
  for (int& l : labels)
    if (l < 0) l = model_.k();
  return labels;
}

std::vector<int> RegimeLabeller::label(const arma::fmat& anomalies, arma::vec* correlation) {
  project(anomalies, nullptr, 0);
  return assign(correlation);
}

std::vector<int> RegimeLabeller::label(const arma::fmat& heights, const arma::fmat& reference,
                                       const std::vector<Date>& dates, int running_mean_days,
                                       arma::vec* correlation) {
  const bool smoothed = running_mean_days > 1;
  project(heights, &reference, smoothed ? running_mean_days - 1 : 0);
  if (smoothed) smooth(dates, running_mean_days);
  return assign(correlation);
}

}  // namespace isohypse
