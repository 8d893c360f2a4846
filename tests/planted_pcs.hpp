// Test helper: principal components with planted regimes, for the
// classifiability and regime-count tests (invented data with a known answer).
#pragma once

#include <armadillo>
#include <cmath>
#include <vector>

namespace isohypse::testing {

// Planted regimes: three centres at the corners of an equilateral triangle
// of radius 3 in the first two of 8 components (so k = 2 has no preferred
// merge), persistent 6-day episodes in 120-day seasons, unit noise in every
// component. One day per row, as EofResult::pcs.
inline arma::mat planted_regime_pcs(arma::uword n_days, std::vector<char>& consecutive) {
  arma::arma_rng::set_seed(21);
  const double pi = 3.141592653589793;
  const arma::uword dims = 8;
  arma::mat centres(dims, 3, arma::fill::zeros);
  for (int j = 0; j < 3; ++j) {
    centres(0, j) = 3.0 * std::cos(2.0 * pi * j / 3.0);
    centres(1, j) = 3.0 * std::sin(2.0 * pi * j / 3.0);
  }
  arma::mat pcs(n_days, dims);
  consecutive.assign(n_days, 1);
  int regime = 0;
  for (arma::uword t = 0; t < n_days; ++t) {
    if (t % 6 == 0) regime = static_cast<int>(arma::randi<arma::uvec>(1, arma::distr_param(0, 2))[0]);
    if (t % 120 == 0) consecutive[t] = 0;
    pcs.row(t) = centres.col(regime).t() + arma::randn<arma::rowvec>(dims);
  }
  return pcs;
}


}  // namespace isohypse::testing
