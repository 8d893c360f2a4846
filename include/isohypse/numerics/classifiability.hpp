// The classifiability index of a set of k-means partitions, and red-noise
// surrogates to compare it with (the choice of k: regime_significance.hpp).
//
// Michelangeli, Vautard & Legras (1995), "Weather regimes: recurrence and
// quasi stationarity", J. Atmos. Sci. 52, 1237-1256 (equations from memory):
// k-means is run N times from different seeds, giving partitions P_1..P_N
// (their centroid sets). For two partitions
//   A(P, Q) = min over clusters i of P of max over clusters j of Q of
//             ACC(c_i, c_j),
// ACC being the uncentred anomaly correlation of two centroids. The index is
// the mean of A(P_m, P_n) over all ordered pairs m != n (1 when every run
// finds the same centroids); the best partition is the one with the largest
// sum of A against the others. The index is compared with that of red-noise
// surrogates (each principal component replaced by an independent AR(1)
// process with its lag-1 autocorrelation and variance).
//
// Orientation: a centroid set is dims x k (one centroid per column, as
// KMeansResult::centroids); pcs is n_time x n_pc (one day per ROW, as
// EofResult::pcs).
#pragma once

#include <armadillo>
#include <cstdint>
#include <vector>

#include "isohypse/base/vocabulary.hpp"

namespace isohypse {

// a.b / (|a| |b|). Throws InputError when the lengths differ and
// NumericalError when either vector is zero.
double anomaly_correlation(const arma::vec& a, const arma::vec& b);

// A(P, Q) = min_i max_j ACC(P.col(i), Q.col(j)); P and Q are dims x k_P and
// dims x k_Q. Not symmetric. Throws InputError when the dims differ.
double partition_similarity(const arma::mat& P, const arma::mat& Q);

struct ClassifiabilityResult {
  double index = 0.0;   // mean of A over ordered pairs m != n
  // The index's jackknife standard error over the runs (Efron & Tibshirani
  // 1993, An Introduction to the Bootstrap, eq. 11.5): the spread of the
  // index recomputed with each run left out, sqrt((N-1)/N sum (I_(i) -
  // mean)^2). It measures how much the index depends on the particular runs
  // drawn; 0 when every run finds the same centroids, and 0 for N = 2.
  double spread = 0.0;
  int best = 0;         // run with the largest sum of A against the others (ties: lowest)
  arma::mat similarity; // runs x runs, (m, n) = A(P_m, P_n); diagonal 1
};

// Needs at least two centroid sets of equal dims (InternalError otherwise).
ClassifiabilityResult classifiability(const std::vector<arma::mat>& centroid_sets);

// Red-noise surrogate of pcs (n_time x n_pc): every column replaced by an
// independent AR(1) series x_t = r1 x_{t-1} + sqrt(1 - r1^2) sigma e_t with
// that column's lag-1 autocorrelation r1 (lag1_autocorrelation, consecutive
// days only), mean and standard deviation sigma, restarted from its
// stationary distribution at every break (consecutive[t] == 0), same length.
// Throws InputError when consecutive has the wrong length.
arma::mat red_noise_surrogate(const arma::mat& pcs, const std::vector<char>& consecutive,
                              std::uint64_t seed);

}  // namespace isohypse
