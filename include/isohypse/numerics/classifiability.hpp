// The classifiability index and the choice of the number of regimes.
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
// process with its lag-1 autocorrelation and variance); k is significant
// where the data's index exceeds the surrogates' `level` quantile.
//
// Orientation: a centroid set is dims x k (one centroid per column, as
// KMeansResult::centroids); pcs is n_time x n_pc (one day per ROW, as
// EofResult::pcs).
#pragma once

#include <armadillo>
#include <cstdint>
#include <functional>
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
  int best = 0;         // run with the largest sum of A against the others (ties: lowest)
  arma::mat similarity; // runs x runs, (m, n) = A(P_m, P_n); diagonal 1
};

// Needs at least two centroid sets of equal dims (InputError otherwise).
ClassifiabilityResult classifiability(const std::vector<arma::mat>& centroid_sets);

// Red-noise surrogate of pcs (n_time x n_pc): every column replaced by an
// independent AR(1) series x_t = r1 x_{t-1} + sqrt(1 - r1^2) sigma e_t with
// that column's lag-1 autocorrelation r1 (lag1_autocorrelation, consecutive
// days only), mean and standard deviation sigma, restarted from its
// stationary distribution at every break (consecutive[t] == 0), same length.
// Throws InputError when consecutive has the wrong length.
arma::mat red_noise_surrogate(const arma::mat& pcs, const std::vector<char>& consecutive,
                              std::uint64_t seed);

struct RegimeCountOptions {
  int k_min = 2, k_max = 8;
  int runs = 30;             // k-means runs per k (each a partition P_m)
  int surrogates = 30;       // red-noise surrogates per k
  double level = 0.9;        // quantile of the surrogate indices to beat
  int restarts_per_run = 1;  // k-means++ restarts inside each run
  std::uint64_t seed = kDefaultSeed;
  int threads = 0;           // 0 = hardware
};

// An index must exceed the surrogates' level by more than this to count as
// significant: with k = 2 both are often 1.000, and such a k cannot be told
// apart from red noise.
inline constexpr double kSignificanceMargin = 1e-3;
// Indices closer than this are treated as tied when choosing k; the tie goes
// to the k farthest above its surrogate level.
inline constexpr double kIndexTie = 0.01;

struct RegimeCountRow {
  int k = 0;
  double index = 0.0;            // classifiability of the data
  double surrogate_level = 0.0;  // the `level` quantile of the surrogate indices
                                 // (linear interpolation, numpy's default)
  bool significant = false;      // index > surrogate_level
  int best_run = 0;              // the data's best partition among the runs
};

// The quick k-means runs of the table stop when one Lloyd step lowers the
// inertia by at most this fraction of it (see kmeans_quick): their centroids
// are then within convergence noise of fully converged ones, which moves the
// indices by far less than their sampling spread.
inline constexpr double kClassifiabilityInertiaChange = 1e-6;

// For each k in [k_min, k_max]: `runs` quick k-means runs (kmeans_quick, in
// float, restarts_per_run k-means++ starts each, seeds derived from
// (seed, k, run)) on the data and on each of `surrogates` red-noise
// surrogates (the same surrogates for every k, made once). The result does
// not depend on the thread count. progress(done, total), if set, is called from the
// calling thread after each (k, data set) unit. Throws InputError for
// options out of range (2 <= k_min <= k_max <= n_time, runs >= 2,
// surrogates >= 1, 0 < level < 1, restarts_per_run >= 1).
std::vector<RegimeCountRow> regime_count_table(const arma::mat& pcs,
                                               const std::vector<char>& consecutive,
                                               const RegimeCountOptions& opt,
                                               const std::function<void(int, int)>& progress);

// The k for `k: auto`: among significant rows the one with the largest index,
// i.e. the most reproducible partition that beats red noise; indices within
// kIndexTie of the largest count as tied, and the tie goes to the largest
// margin over the surrogate level (then the smaller k). (The largest margin index - surrogate_level was tried and rejected:
// the surrogates' level at small k scatters between 0.86 and 1.0 from one
// sample to the next, so the margin favoured large k with mediocre indices
// even for data with three planted regimes of index 1.) Throws
// NumericalError listing the table when no k is significant (the caller may
// fall back to a fixed k).
int choose_regime_count(const std::vector<RegimeCountRow>& table);

}  // namespace isohypse
