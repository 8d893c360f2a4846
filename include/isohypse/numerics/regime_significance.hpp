// How many regimes the data support: for each k, how reproducible and how
// well separated the data's k-means partitions are compared with red noise,
// with p-values, a correction for testing several k, and the choice of k.
//
// For each k in k_min..k_max and each data set (the data's principal
// components, then red-noise surrogates: classifiability.hpp), `runs` quick
// k-means runs (kmeans_quick) give two statistics:
//  - the classifiability index I of the runs' partitions and its jackknife
//    spread (Michelangeli, Vautard & Legras 1995, J. Atmos. Sci. 52,
//    1237-1256; classifiability.hpp);
//  - the variance ratio R = (T - W) / W of the run with the least inertia W
//    (T: the sum of squares about the mean): between-cluster over
//    within-cluster variance (the ratio Straus, Corti & Molteni 2007,
//    J. Climate 20, 2251-2272, compare with red noise; from memory).
// On a long record red noise with a few dominant EOFs is itself highly
// reproducible at small k (its index near 1), so I alone may not tell a real
// k from noise; R sees that real regimes are farther apart than the lobes of
// a Gaussian cloud with the same spectrum.
//
// Tests. Monte Carlo p-values (Davison & Hinkley 1997, Bootstrap Methods and
// their Application, eq. 4.11): p_I = (1 + #{s : I_s >= I - kIndexResolution})
// / (1 + S), p_R = (1 + #{s : R_s >= R}) / (1 + S) over the S surrogates.
// The separation test carries the correction for testing several k: Holm's
// step-down procedure (Holm 1979, Scand. J. Statist. 6, 65-70) on the p_R of
// the m values of k at alpha = 1 - level (with the p_R sorted ascending, the
// i-th passes when it and all before it are at most alpha / (m - i + 1)).
// A k passes when its p_R passes Holm's procedure AND p_I <= alpha. On red
// noise the chance that any k passes is then at most alpha: it cannot exceed
// the chance that any p_R passes, which Holm's procedure bounds; the index
// test only removes k. The index is not corrected as well because at small
// k red noise itself reaches an index of 1 in a few per cent of surrogates
// (measured on the demo record: 1 of 100 at k = 4), so a corrected index
// test would reject the planted k of a long record along with the noise.
// Since the smallest p-value is 1 / (1 + S), Holm's procedure needs
// S >= m / alpha - 1 surrogates (69 for k = 2..8 at level 0.9):
// minimum_surrogates().
//
// Stopping early. Surrogates are drawn in batches of kSurrogateBatch. After
// each batch, a k whose p-value can no longer reach alpha, whatever the
// remaining surrogates give ((1 + c) / (1 + S) > alpha, c the surrogates so
// far at least as classifiable, or at least as separated), gets no more
// surrogates: its decision is that of the full test, and its p-values are
// reported as lower bounds (stopped_early). The idea is that of sequential
// Monte Carlo p-values (Besag & Clifford 1991, Biometrika 78, 301-304).
//
// The choice of k. Among the k that pass, the largest index I*. Every
// passing k whose index is within max(spread*, kIndexTie) of I* is as
// reproducible as far as the runs can tell (the one-standard-error rule of
// Breiman et al. 1984, Classification and Regression Trees, ch. 3). On a
// record with well separated regimes several k reach an index of 1 (a
// five-regime world also has a perfectly reproducible three-cluster
// partition that merges pairs), so the index alone cannot rank them; among
// these tied k the gap decides (Tibshirani, Walther & Hastie 2001,
// "Estimating the number of clusters in a data set via the gap statistic",
// J. R. Statist. Soc. B 63, 411-423, with the red-noise surrogates as the
// reference distribution): Gap = log(1 + R) - mean_s log(1 + R_s) = mean_s
// log W_s - log W (T is the same up to sampling), s = sd_s(log(1 + R_s))
// sqrt(1 + 1/S); the smallest tied k whose gap is within s of the largest
// gap among the tied is chosen. With a single k at the top, that k.
//
// Orientation: pcs is n_time x n_pc (one day per ROW, as EofResult::pcs).
// Determinism: every run's seed derives from (seed, k, data set, run), the
// batches are fixed, so the table does not depend on the thread count.
#pragma once

#include <armadillo>
#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "isohypse/base/vocabulary.hpp"

namespace isohypse {

struct RegimeCountOptions {
  int k_min = 2, k_max = 8;
  int runs = 30;             // k-means runs per k and data set (each a partition P_m)
  int surrogates = 100;      // red-noise surrogates (at most; see stopping early)
  double level = 0.9;        // 1 - alpha, alpha the family-wise error rate over all k
  int restarts_per_run = 1;  // k-means++ restarts inside each run
  bool stop_early = true;    // stop the surrogates of a k once it cannot pass
  std::uint64_t seed = kDefaultSeed;
  int threads = 0;           // 0 = hardware
};

// Indices closer than this count as equal when the surrogates are compared
// with the data: an index of 1 comes out of the float runs as 0.99999x.
inline constexpr double kIndexResolution = 1e-5;
// Indices closer than this to the highest are tied when k is chosen: the
// quick float runs leave indices of partitions that every run finds between
// 0.9999 and 1 (measured on the planted demo worlds), and 0.001 is one
// centroid's anomaly correlation of 0.999 against 1 in a pair.
inline constexpr double kIndexTie = 1e-3;
// Surrogates drawn between two checks for stopping early.
inline constexpr int kSurrogateBatch = 10;

// The quick k-means runs of the table stop when one Lloyd step lowers the
// inertia by at most this fraction of it (see kmeans_quick): their centroids
// are then within convergence noise of fully converged ones, which moves the
// indices by far less than their sampling spread.
inline constexpr double kClassifiabilityInertiaChange = 1e-6;

struct RegimeCountRow {
  int k = 0;
  double index = 0.0;            // classifiability of the data's runs
  double index_spread = 0.0;     // its jackknife standard error over the runs
  int best_run = 0;              // the data's run that agrees best with the others
  arma::mat best_centroids;      // that run's centroids (n_pc x k); not stored in the model
  double variance_ratio = 0.0;   // (T - W) / W of the data's least-inertia run
  std::vector<double> surrogate_index, surrogate_ratio;  // per surrogate drawn, in order
  double surrogate_level = 0.0;  // the `level` quantile of surrogate_index (numpy's default
                                 // linear interpolation), for display
  double p_index = 1.0, p_ratio = 1.0;
  double gap = 0.0, gap_spread = 0.0;  // log(1 + R) - mean_s log(1 + R_s), and its spread
  bool stopped_early = false;    // fewer surrogates than asked: the p-values are lower bounds
  double holm_level = 0.0;       // alpha / (m - rank + 1) at this k's rank by p_ratio
  bool significant = false;      // p_ratio passes Holm's procedure and p_index <= alpha

  int surrogates() const { return static_cast<int>(surrogate_index.size()); }
};

// The smallest number of surrogates with which any of m values of k can pass
// at `level`: ceil(m / (1 - level)) - 1 (up to rounding).
int minimum_surrogates(int k_count, double level);

// The table for k_min..k_max. progress(done, total), if set, is called from
// the calling thread after each (k, data set) unit; total shrinks when a k
// stops early. Throws InputError for options out of range (2 <= k_min <=
// k_max <= n_time, runs >= 3, surrogates >= 1, 0 < level < 1,
// restarts_per_run >= 1).
std::vector<RegimeCountRow> regime_count_table(const arma::mat& pcs,
                                               const std::vector<char>& consecutive,
                                               const RegimeCountOptions& opt,
                                               const std::function<void(int, int)>& progress);

// The verdicts at alpha = 1 - level: Holm's step-down procedure over the
// rows' p_ratio (ties in p to the smaller k first) sets holm_level, and
// significant where it passes and p_index <= alpha.
void apply_holm(std::vector<RegimeCountRow>& table, double level);

struct RegimeCountChoice {
  int k = 0;           // 0 when no k passes
  std::string reason;  // in words, for the summary, the model and inspect
};

// The k with the largest index among the significant rows, ties broken by
// the gap (see above), and why. When no row is significant, k = 0 and the
// reason says that no regime structure is significant.
RegimeCountChoice choose_regime_count(const std::vector<RegimeCountRow>& table);

}  // namespace isohypse
