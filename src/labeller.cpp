#include "isohypse/labeller.hpp"

#include <string>

#include "isohypse/error.hpp"

namespace isohypse {

RegimeLabeller::RegimeLabeller(const RegimeModel& model)
    : model_(model), weights_(arma::conv_to<arma::fvec>::from(model.weights)) {}

std::vector<int> RegimeLabeller::label(const arma::fmat& anomalies, arma::vec* correlation) {
  const arma::uword np = model_.eofs.n_rows, n = anomalies.n_cols;
  if (anomalies.n_rows != np)
    throw InputError("regime labels: the anomalies have " + std::to_string(anomalies.n_rows) +
                     " grid points, the regime model " + std::to_string(np));
  // Weighted in float (as derive weights its anomalies), centred in double.
  weighted_.set_size(np, n);
  const float* w = weights_.memptr();
  const double* mean = model_.eof_mean.memptr();
  for (arma::uword t = 0; t < n; ++t) {
    const float* x = anomalies.colptr(t);
    double* b = weighted_.colptr(t);
    for (arma::uword i = 0; i < np; ++i) b[i] = static_cast<double>(x[i] * w[i]) - mean[i];
  }
  pcs_ = weighted_.t() * model_.eofs;
  // A NaN or Inf anywhere in a day's field leaves a NaN or Inf in its
  // components: checking these few numbers spares a pass over the fields.
  if (!pcs_.is_finite())
    throw DataError("regime labels: the anomalies hold NaN or Inf values (" + std::to_string(anomalies.n_rows) +
                    " x " + std::to_string(n) + ")");

  std::vector<int> labels;
  arma::vec& cor = correlation ? *correlation : cor_;
  assign_regimes(pcs_, model_.centroids, model_.no_regime_threshold, labels, cor);
  for (int& l : labels)
    if (l < 0) l = model_.k();
  return labels;
}

}  // namespace isohypse
