// k-means clustering of points in principal-component space.
//
// Orientation: data is dims x n (one point, e.g. one day's PCs, per COLUMN);
// centroids are dims x k. Distances are Euclidean.
// Algorithm: k-means++ seeding (Arthur & Vassilvitskii 2007, "k-means++: the
// advantages of careful seeding", Proc. SODA), then Lloyd iterations (Lloyd
// 1982, IEEE Trans. Inf. Theory 28, 129-137), computed either plainly or with
// Hamerly's bounds (Hamerly 2010, "Making k-means even faster", Proc. SIAM
// SDM), which give Lloyd's assignments from the same start while skipping
// most distance computations. A cluster left empty is re-seeded at the point
// farthest from its centre (as scikit-learn does).
// Convergence (as scikit-learn's Lloyd): stop when no label changes, or when
// the summed squared centre shift is <= tolerance * the mean per-dimension
// variance of the data; then labels are made consistent with the centres.
// Determinism: restart r draws from its own generator seeded from (seed, r),
// so the result is the same for any thread count.
// Errors: InputError for sizes that do not fit (naming the caller and both
// sizes), DataError for NaN or Inf in the data.
#pragma once

#include <armadillo>
#include <cstdint>
#include <vector>

#include "isohypse/base/vocabulary.hpp"

namespace isohypse {

enum class LloydStep { Plain, Hamerly };

struct KMeansOptions {
  int k = 4;
  int restarts = 100;            // independent k-means++ starts; the smallest inertia wins
  int max_iterations = 300;      // Lloyd iterations per restart
  double tolerance = 1e-10;      // relative to the mean per-dimension variance (see above)
  std::uint64_t seed = kDefaultSeed;
  int threads = 0;               // 0 = std::thread::hardware_concurrency()
  LloydStep step = LloydStep::Hamerly;
};

struct KMeansResult {
  arma::mat centroids;       // dims x k
  std::vector<int> labels;   // per point, 0..k-1 (column index into centroids)
  double inertia = 0.0;      // within-cluster sum of squared distances
  int iterations = 0;        // Lloyd iterations of the kept restart
  int best_restart = 0;      // index of the kept restart (ties: lowest index)
};

// Clusters ordered by decreasing size; equal sizes by their first member
// (lowest point index first), so the numbering does not depend on the seed.
KMeansResult kmeans(const arma::mat& data, const KMeansOptions& opt);

// Lloyd iterations from the given initial centres (dims x k), no restarts:
// the exact counterpart of scikit-learn's KMeans(init=centres, n_init=1,
// algorithm="lloyd", tol=tolerance). Clusters keep the order of the initial
// centres.
KMeansResult kmeans_from(const arma::mat& data, const arma::mat& initial_centres,
                         int max_iterations, double tolerance,
                         LloydStep step = LloydStep::Plain);

// A quick k-means run, for the classifiability table's thousands of runs
// whose centroids are only compared by anomaly correlation (use kmeans() for
// a partition that is kept). It differs from kmeans() with one restart in
// four ways only: single precision (the points are float, the cluster sums
// double); plain Lloyd steps whose nearest centre minimises |c|^2/2 - x.c
// (in float, so near-ties may go the other way than with the distances);
// the inertia computed from the cluster sums in double (sum |x|^2 -
// 2 sum_j c_j.S_j + sum_j n_j |c_j|^2); and a stop, besides "no label
// changed", when one step lowered the inertia by at most
// `relative_inertia_change` of it.
// The seeding is kmeans()'s k-means++ with restart r drawing from (seed, r),
// so the starts equal kmeans()'s up to float rounding of the distances.
// Orientation: points is n x dims (one point per ROW, as EofResult::pcs), so
// that distances are computed for many points at once; the centroids
// returned are dims x k in double, in seeding order (not reordered by size).
// Errors: as kmeans() (InputError for k out of 1..n, DataError for NaN/Inf).
struct QuickKMeansOptions {
  int k = 4;
  int restarts = 1;                       // the smallest inertia wins (ties: lowest)
  int max_iterations = 300;
  double relative_inertia_change = 1e-6;  // stop when (I_prev - I) <= this * I
  std::uint64_t seed = kDefaultSeed;
};

// The result and the buffers of quick runs; reuse one per thread so that a
// run allocates nothing after the first (contents other than the results are
// scratch).
struct QuickKMeans {
  arma::mat centroids;      // dims x k, result
  std::vector<int> labels;  // per point, result
  double inertia = 0.0;     // result (accumulated in double)
  int iterations = 0;       // Lloyd updates of the kept restart
  // scratch
  arma::fmat centres;                  // dims x k
  arma::mat sums;                      // k x dims
  bool sums_valid = false;             // sums and count match labels
  std::vector<arma::uword> count;
  std::vector<double> partial;         // partial cluster sums
  std::vector<float> half_norms;       // |c_j|^2 / 2 per centre
  double squares = 0.0;                // sum of the squared coordinates of the points
  std::vector<float> nearest, d2;      // per point
  std::vector<int> best_j, kept_labels;
};

void kmeans_quick(const arma::fmat& points, const QuickKMeansOptions& opt, QuickKMeans& state);

// Index of the nearest centroid (squared Euclidean; ties: lowest index) for
// every column of data.
std::vector<int> nearest_centroid(const arma::mat& data, const arma::mat& centroids);

// Adjusted Rand index (Hubert & Arabie 1985, J. Classification 2, 193-218,
// "Comparing partitions"): 1 for identical partitions up to relabelling,
// about 0 for independent ones. Labels may be any integers. Two partitions
// that are both a single cluster (or both all singletons) give 1, as
// scikit-learn's adjusted_rand_score. Throws InputError when lengths differ.
double adjusted_rand_index(const std::vector<int>& a, const std::vector<int>& b);

}  // namespace isohypse
