// Empirical orthogonal functions (EOFs) of weighted anomalies.
//
// Orientation: X is n_space x n_time (one day per column, as in Field), already
// multiplied by the area weights sqrt(cos lat). With Xc = X minus its time
// mean, Xc^T = U S V^T: the EOFs are the columns of V (n_space long, unit
// norm), the principal components (PCs) Xc^T * eofs = U S, the eigenvalues of
// the covariance lambda_k = s_k^2 / (n_time - 1).
// Sign convention: each EOF's loading of largest magnitude is positive.
// All results are double precision; the input stays float and is never
// copied to double whole (the big products run in float or on row blocks).
#pragma once

#include <armadillo>
#include <cstdint>
#include <string>
#include <vector>

#include "isohypse/base/vocabulary.hpp"

namespace isohypse {

struct EofOptions {
  // > 0: keep exactly this many EOFs (at most max_count).
  int count = 0;
  // Used when count == 0: the fewest EOFs whose explained variance reaches
  // this fraction of the total, but never more than max_count (the result's
  // `explained` tells whether the fraction was reached).
  double variance_fraction = 0.8;
  int max_count = 60;
  // Exact: eigen-decomposition of the smaller Gram matrix, built in double
  // from row blocks. Randomized: randomized subspace iteration (Halko,
  // Martinsson & Tropp 2011, SIAM Review 53, 217-288, Algorithm 4.4) with
  // the products in float and a subspace twice the retained size, iterated
  // until the retained eigenvalues change by less than 1e-6 (relative; at
  // most 40 steps); the subspace grows until the variance fraction is
  // reached. Agrees with the exact method to ~1e-8 in explained fractions.
  // Automatic: exact when min(n_space, n_time) <= 2500, else randomized.
  enum class Method { Automatic, Exact, Randomized } method = Method::Automatic;
  std::uint64_t seed = kDefaultSeed;  // the randomized method's Gaussian test matrix
};

struct EofResult {
  arma::vec mean;           // n_space: the time mean removed (weighted space)
  arma::mat eofs;           // n_space x n_eof, unit-norm columns
  arma::mat pcs;            // n_time x n_eof, = Xc^T * eofs (to float precision,
                            // ~1e-6 relative, for the randomized method)
  arma::vec eigenvalues;    // lambda_k = s_k^2 / (n_time - 1), descending
  arma::vec explained;      // lambda_k / total_variance
  arma::vec north_error;    // North et al. (1982): lambda_k * sqrt(2 / effective_n_k)
  arma::vec effective_n;    // effective_sample_size_variance(n_time, r1 of PC k)
  double total_variance = 0.0;  // trace of the covariance matrix
  std::string method;           // "exact" or "randomized"
};

// X: n_space x n_time weighted anomalies; consecutive (n_time long):
// consecutive[t] != 0 when day t immediately follows day t-1 (see
// consecutive_flags in field.hpp), used for the PCs' lag-1 autocorrelation.
// Throws InputError for an empty X, a consecutive vector of the wrong length
// or inconsistent options; DataError when X holds NaN or Inf; NumericalError
// when n_time < 3, when the data have no variance, or when the requested count
// exceeds min(n_space, n_time - 1) (the message names both sizes).
EofResult compute_eofs(const arma::fmat& X, const std::vector<char>& consecutive,
                       const EofOptions& opt);

// Projects weighted data X (n_space x n, e.g. forecast anomalies times
// sqrt(cos lat)) onto stored EOFs after removing `mean`: returns n x n_eof,
// (X - mean)^T * eofs. Throws InputError when the sizes disagree (naming
// them) and DataError for NaN or Inf in X.
arma::mat project_onto_eofs(const arma::fmat& X, const arma::vec& mean, const arma::mat& eofs);

// Lag-1 autocorrelation of x using only pairs (t-1, t) with consecutive[t]
// != 0: the mean lagged product of deviations from the overall mean divided
// by the overall variance (the usual sample autocorrelation). 0 when there is
// no pair or no variance. Throws InputError when the lengths differ.
double lag1_autocorrelation(const arma::vec& x, const std::vector<char>& consecutive);

// Effective sample sizes of n values with lag-1 autocorrelation r1 (from
// memory: Bretherton et al. 1999, J. Climate 12, 1990-2009, "The effective
// number of spatial degrees of freedom of a time-varying field"): for a mean
// n (1 - r1) / (1 + r1), for a variance n (1 - r1^2) / (1 + r1^2).
double effective_sample_size_mean(double n, double r1);
double effective_sample_size_variance(double n, double r1);

// North et al. (1982, Mon. Wea. Rev. 110, 699-706, "Sampling errors in the
// estimation of empirical orthogonal functions"): delta lambda = lambda
// sqrt(2 / n_effective).
double north_error(double eigenvalue, double n_effective);

}  // namespace isohypse
