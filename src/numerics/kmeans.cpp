#include "isohypse/numerics/kmeans.hpp"

#include <algorithm>
#include <cstring>
#include <cmath>
#include <limits>
#include <map>
#include <numeric>
#include <string>

#include "isohypse/base/error.hpp"
#include "base/parallel.hpp"
#include "base/random.hpp"

namespace isohypse {
namespace {

using arma::uword;

double sq_dist(const double* a, const double* b, uword d) {
  double s = 0.0;
  for (uword i = 0; i < d; ++i) {
    const double t = a[i] - b[i];
    s += t * t;
  }
  return s;
}

void require_points(const arma::mat& data, uword k, const char* who) {
  if (data.n_rows == 0)
    throw InternalError(std::string(who) + ": the points have no dimensions (0 x " +
                     std::to_string(data.n_cols) + " matrix)");
  if (k < 1) throw InputError(std::string(who) + ": k must be >= 1, found " + std::to_string(k));
  if (k > data.n_cols)
    throw InputError(std::string(who) + ": k = " + std::to_string(k) + " regimes but only " +
                     std::to_string(data.n_cols) + " days (points) to cluster");
  if (!data.is_finite())
    throw DataError(std::string(who) + ": the points hold NaN or Inf values");
}

// The stopping threshold of scikit-learn's KMeans: tol times the mean
// per-dimension variance (population variance) of the data.
double scaled_tolerance(const arma::mat& X, double tol) {
  return tol * arma::mean(arma::var(X, 1, 1));
}

// The nearest and second-nearest centre of point x (squared Euclidean
// distances; ties: lowest index). The cost is latency, not arithmetic: sums
// for up to four centres run side by side, and the selection avoids
// branches, which are unpredictable for points between two centres.
struct Nearest {
  uword first;
  double d1, d2;
};
Nearest nearest_two(const double* x, const arma::mat& C, double* dist) {
  const uword d = C.n_rows, k = C.n_cols;
  uword j = 0;
  for (; j + 4 <= k; j += 4) {
    const double* c = C.colptr(j);
    double s0 = 0.0, s1 = 0.0, s2 = 0.0, s3 = 0.0;
    for (uword r = 0; r < d; ++r) {
      const double t0 = x[r] - c[r], t1 = x[r] - c[d + r], t2 = x[r] - c[2 * d + r],
                   t3 = x[r] - c[3 * d + r];
      s0 += t0 * t0;
      s1 += t1 * t1;
      s2 += t2 * t2;
      s3 += t3 * t3;
    }
    dist[j] = s0;
    dist[j + 1] = s1;
    dist[j + 2] = s2;
    dist[j + 3] = s3;
  }
  for (; j + 2 <= k; j += 2) {
    const double* c = C.colptr(j);
    double s0 = 0.0, s1 = 0.0;
    for (uword r = 0; r < d; ++r) {
      const double t0 = x[r] - c[r], t1 = x[r] - c[d + r];
      s0 += t0 * t0;
      s1 += t1 * t1;
    }
    dist[j] = s0;
    dist[j + 1] = s1;
  }
  if (j < k) dist[j] = sq_dist(x, C.colptr(j), d);
  Nearest n{0, dist[0], std::numeric_limits<double>::infinity()};
  for (j = 1; j < k; ++j) {
    const double v = dist[j];
    const bool closer = v < n.d1;
    n.d2 = closer ? n.d1 : std::min(n.d2, v);
    n.first = closer ? j : n.first;
    n.d1 = closer ? v : n.d1;
  }
  return n;
}

// Per-cluster sums and counts of the labelled points. The plain step
// rebuilds them every iteration (as scikit-learn); the Hamerly step moves a
// point's contribution when its label changes, since late iterations move
// few points.
struct ClusterSums {
  arma::mat sum;  // dims x k
  std::vector<uword> count;
  bool valid = false;

  void rebuild(const arma::mat& X, const std::vector<int>& labels, uword k) {
    const uword d = X.n_rows;
    sum.zeros(d, k);
    count.assign(k, 0);
    for (uword i = 0; i < X.n_cols; ++i) {
      const double* x = X.colptr(i);
      double* s = sum.colptr(labels[i]);
      for (uword r = 0; r < d; ++r) s[r] += x[r];
      ++count[labels[i]];
    }
    valid = true;
  }
  void move(const double* x, int from, int to) {
    double* a = sum.colptr(from);
    double* b = sum.colptr(to);
    for (uword r = 0; r < sum.n_rows; ++r) {
      a[r] -= x[r];
      b[r] += x[r];
    }
    --count[from];
    ++count[to];
  }
};

// New centres: the means of the clusters. A cluster left empty takes the
// point farthest from its current centre C, which leaves its old cluster
// (scikit-learn's rule; the labels themselves follow at the next step, so
// the sums no longer match the labels and are marked for a rebuild).
arma::mat cluster_means(const arma::mat& X, const std::vector<int>& labels, const arma::mat& C,
                        ClusterSums& sums) {
  const uword d = X.n_rows, k = C.n_cols;
  arma::mat mean = sums.sum;
  std::vector<uword> count = sums.count;
  std::vector<uword> empty;
  for (uword j = 0; j < k; ++j)
    if (count[j] == 0) empty.push_back(j);
  if (!empty.empty()) {
    std::vector<double> dist(X.n_cols);
    for (uword i = 0; i < X.n_cols; ++i) dist[i] = sq_dist(X.colptr(i), C.colptr(labels[i]), d);
    std::vector<uword> order(X.n_cols);
    std::iota(order.begin(), order.end(), 0);
    std::stable_sort(order.begin(), order.end(), [&](uword a, uword b) { return dist[a] > dist[b]; });
    for (std::size_t e = 0; e < empty.size() && e < order.size(); ++e) {
      const uword i = order[e];
      mean.col(labels[i]) -= X.col(i);
      --count[labels[i]];
      mean.col(empty[e]) = X.col(i);
      count[empty[e]] = 1;
    }
    sums.valid = false;
  }
  for (uword j = 0; j < k; ++j)
    if (count[j] > 0) mean.col(j) /= static_cast<double>(count[j]);
    else mean.col(j) = C.col(j);  // more empty clusters than points: keep
  return mean;
}

struct Run {
  arma::mat centroids;
  std::vector<int> labels;
  double inertia = 0.0;
  int iterations = 0;
};

// Lloyd iterations in scikit-learn's order: assign with the current centres,
// move the centres, stop on unchanged labels or a small shift. The Hamerly
// variant keeps an upper bound u on the distance to the own centre and a
// lower bound l on the distance to any other; a point whose u is below
// max(l, half the distance from its centre to the nearest other centre)
// cannot change cluster, so its distances are not computed.
Run lloyd(const arma::mat& X, arma::mat C, int max_iterations, double tol, LloydStep step) {
  const uword n = X.n_cols, d = X.n_rows, k = C.n_cols;
  const bool hamerly = step == LloydStep::Hamerly;
  std::vector<int> labels(n, -1), labels_old(n, -1);
  std::vector<double> upper, lower, dist(k);
  if (hamerly) {
    upper.assign(n, 0.0);
    lower.assign(n, 0.0);
  }
  arma::vec half_gap(k);
  ClusterSums sums;
  bool first_pass = true;

  auto assign = [&] {
    if (!hamerly || first_pass) {
      for (uword i = 0; i < n; ++i) {
        const Nearest nn = nearest_two(X.colptr(i), C, dist.data());
        labels[i] = static_cast<int>(nn.first);
        if (hamerly) {
          upper[i] = std::sqrt(nn.d1);
          lower[i] = std::sqrt(nn.d2);
        }
      }
      first_pass = false;
      sums.valid = false;
      return;
    }
    for (uword j = 0; j < k; ++j) {
      double m = std::numeric_limits<double>::infinity();
      for (uword o = 0; o < k; ++o)
        if (o != j) m = std::min(m, sq_dist(C.colptr(j), C.colptr(o), d));
      half_gap[j] = 0.5 * std::sqrt(m);
    }
    for (uword i = 0; i < n; ++i) {
      const double bound = std::max(half_gap[labels[i]], lower[i]);
      if (upper[i] <= bound) continue;
      const double* x = X.colptr(i);
      upper[i] = std::sqrt(sq_dist(x, C.colptr(labels[i]), d));
      if (upper[i] <= bound) continue;
      const Nearest nn = nearest_two(x, C, dist.data());
      const int to = static_cast<int>(nn.first);
      if (to != labels[i] && sums.valid) sums.move(x, labels[i], to);
      labels[i] = to;
      upper[i] = std::sqrt(nn.d1);
      lower[i] = std::sqrt(nn.d2);
    }
  };

  Run run;
  bool strict = false;
  for (int it = 0; it < max_iterations; ++it) {
    assign();
    if (!sums.valid) sums.rebuild(X, labels, k);
    arma::mat moved = cluster_means(X, labels, C, sums);
    const arma::rowvec shift = arma::sqrt(arma::sum(arma::square(moved - C), 0));
    C = std::move(moved);
    run.iterations = it + 1;
    if (hamerly) {  // keep the bounds valid after the centres moved
      uword far = 0;
      double max1 = 0.0, max2 = 0.0;  // largest and second-largest move
      for (uword j = 0; j < k; ++j) {
        if (shift[j] > max1) {
          max2 = max1;
          max1 = shift[j];
          far = j;
        } else if (shift[j] > max2) {
          max2 = shift[j];
        }
      }
      for (uword i = 0; i < n; ++i) {
        upper[i] += shift[labels[i]];
        lower[i] -= static_cast<uword>(labels[i]) == far ? max2 : max1;
      }
    }
    if (labels == labels_old) {
      strict = true;
      break;
    }
    if (arma::accu(arma::square(shift)) <= tol) break;
    labels_old = labels;
  }
  if (!strict) assign();  // labels consistent with the final centres

  run.inertia = 0.0;
  for (uword i = 0; i < n; ++i) run.inertia += sq_dist(X.colptr(i), C.colptr(labels[i]), d);
  run.centroids = std::move(C);
  run.labels = std::move(labels);
  return run;
}

// k-means++ (Arthur & Vassilvitskii 2007): the first centre uniform, each
// next one drawn with probability proportional to the squared distance to
// the nearest centre chosen so far.
arma::mat kmeans_plus_plus(const arma::mat& X, uword k, detail::Rng& rng) {
  const uword n = X.n_cols, d = X.n_rows;
  arma::mat C(d, k);
  C.col(0) = X.col(rng.below(n));
  std::vector<double> d2(n);
  for (uword i = 0; i < n; ++i) d2[i] = sq_dist(X.colptr(i), C.colptr(0), d);
  for (uword c = 1; c < k; ++c) {
    const double total = std::accumulate(d2.begin(), d2.end(), 0.0);
    uword pick = 0;
    if (total > 0.0) {
      const double target = rng.uniform() * total;
      double cumulative = 0.0;
      for (uword i = 0; i < n; ++i) {
        if (d2[i] <= 0.0) continue;
        pick = i;  // last candidate so far guards against rounding at the end
        cumulative += d2[i];
        if (cumulative > target) break;
      }
    } else {
      pick = rng.below(n);  // fewer distinct points than k
    }
    C.col(c) = X.col(pick);
    for (uword i = 0; i < n; ++i) d2[i] = std::min(d2[i], sq_dist(X.colptr(i), C.colptr(c), d));
  }
  return C;
}

// Renumbers clusters by decreasing size, ties by first member.
void order_clusters(Run& run) {
  const uword k = run.centroids.n_cols;
  std::vector<std::size_t> size(k, 0), first(k, run.labels.size());
  for (std::size_t i = 0; i < run.labels.size(); ++i) {
    const auto j = static_cast<std::size_t>(run.labels[i]);
    if (size[j]++ == 0) first[j] = i;
  }
  std::vector<uword> order(k);
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(), [&](uword a, uword b) {
    return size[a] != size[b] ? size[a] > size[b] : first[a] < first[b];
  });
  std::vector<int> new_index(k);
  for (uword r = 0; r < k; ++r) new_index[order[r]] = static_cast<int>(r);
  for (int& l : run.labels) l = new_index[static_cast<std::size_t>(l)];
  run.centroids = run.centroids.cols(arma::conv_to<arma::uvec>::from(order));
}

KMeansResult to_result(Run&& run, int best_restart) {
  KMeansResult r;
  r.centroids = std::move(run.centroids);
  r.labels = std::move(run.labels);
  r.inertia = run.inertia;
  r.iterations = run.iterations;
  r.best_restart = best_restart;
  return r;
}

// --- the quick path (kmeans_quick): float points as rows, plain Lloyd ---

constexpr uword kBlock = 288;  // points whose distances are computed together (6 x 48)

// Squared distances of points b..b+m-1 (rows of P) to centre j, into out.
// Inlined into the kernels below, which are cloned for AVX2 (chosen at run
// time): they are the table's inner loops.
inline void distances_to(const float* __restrict p, uword n, uword d, const float* __restrict centre, uword m,
                         float* __restrict out) {
  std::fill(out, out + m, 0.0f);
  for (uword r = 0; r < d; ++r) {
    const float c = centre[r];
    const float* __restrict x = p + r * n;
    for (uword i = 0; i < m; ++i) {
      const float t = x[i] - c;
      out[i] += t * t;
    }
  }
}

__attribute__((target_clones("avx2", "default")))
void block_distances(const float* __restrict p, uword n, uword d, const float* __restrict centre, uword m,
                     float* __restrict out) {
  distances_to(p, n, d, centre, m, out);
}

// For points b..b+m-1: the index of the nearest of the k centres (columns
// of `centres`, d floats each) into bj (ties: lowest index). The nearest
// centre minimises |c|^2 / 2 - x.c (half_norms[j] = |c_j|^2 / 2), one
// multiply-add per coordinate instead of a difference and a square; the
// inertia comes from the cluster sums instead (quick_inertia). G groups of
// eight points at a time in vector registers, G independent chains of
// additions so that the adder's latency is hidden, nothing but the points
// read from memory.
using Lanes = float __attribute__((vector_size(32)));
using IntLanes = int __attribute__((vector_size(32)));

template <int G>
__attribute__((always_inline)) inline void nearest_of_groups(const float* __restrict p, uword n, uword d,
                                                             const float* __restrict centres,
                                                             const float* __restrict half_norms, uword k, uword i,
                                                             int* __restrict bj) {
  Lanes nearest[G];
  IntLanes index[G] = {};
  auto keep = [&](int g, const Lanes& score, uword j) {
    if (j == 0) {
      nearest[g] = score;
      return;
    }
    const IntLanes closer = score < nearest[g];
    nearest[g] = closer ? score : nearest[g];
    index[g] = closer ? static_cast<int>(j) + IntLanes{} : index[g];
  };
  uword j = 0;
  // Two centres per pass over the coordinates: each point vector loaded
  // feeds two multiply-adds.
  for (; j + 2 <= k; j += 2) {
    const float* c0 = centres + j * d;
    const float* c1 = c0 + d;
    Lanes dot0[G] = {}, dot1[G] = {};
    for (uword r = 0; r < d; ++r) {
      const float* x = p + r * n + i;
      const float a = c0[r], b = c1[r];
      for (int g = 0; g < G; ++g) {
        Lanes v;
        std::memcpy(&v, x + 8 * g, sizeof v);
        dot0[g] += v * a;
        dot1[g] += v * b;
      }
    }
    for (int g = 0; g < G; ++g) {
      keep(g, half_norms[j] - dot0[g], j);
      keep(g, half_norms[j + 1] - dot1[g], j + 1);
    }
  }
  if (j < k) {  // an odd last centre
    const float* c = centres + j * d;
    Lanes dot[G] = {};
    for (uword r = 0; r < d; ++r) {
      const float* x = p + r * n + i;
      for (int g = 0; g < G; ++g) {
        Lanes v;
        std::memcpy(&v, x + 8 * g, sizeof v);
        dot[g] += v * c[r];
      }
    }
    for (int g = 0; g < G; ++g) keep(g, half_norms[j] - dot[g], j);
  }
  std::memcpy(bj + i, index, sizeof index);
}

__attribute__((target_clones("arch=haswell", "avx2", "default")))
void block_nearest(const float* __restrict p, uword n, uword d, const float* __restrict centres,
                   const float* __restrict half_norms, uword k, uword m, int* __restrict bj) {
  uword i = 0;
  for (; i + 48 <= m; i += 48) nearest_of_groups<6>(p, n, d, centres, half_norms, k, i, bj);
  for (; i + 8 <= m; i += 8) nearest_of_groups<1>(p, n, d, centres, half_norms, k, i, bj);
  for (; i < m; ++i) {  // the last few points
    float best = 0.0f;
    int bi = 0;
    for (uword j = 0; j < k; ++j) {
      float dot = 0.0f;
      for (uword r = 0; r < d; ++r) dot += p[r * n + i] * centres[j * d + r];
      const float score = half_norms[j] - dot;
      if (j == 0 || score < best) {
        best = score;
        bi = static_cast<int>(j);
      }
    }
    bj[i] = bi;
  }
}

// The sum of the squares of m floats in double, over 8 independent lanes (a
// sequential sum is one long chain of additions).
double sum_of_squares(const float* __restrict v, uword m) {
  double lane[8] = {0, 0, 0, 0, 0, 0, 0, 0};
  uword i = 0;
  for (; i + 8 <= m; i += 8)
    for (uword l = 0; l < 8; ++l) lane[l] += static_cast<double>(v[i + l]) * static_cast<double>(v[i + l]);
  for (; i < m; ++i) lane[0] += static_cast<double>(v[i]) * static_cast<double>(v[i]);
  return ((lane[0] + lane[1]) + (lane[2] + lane[3])) + ((lane[4] + lane[5]) + (lane[6] + lane[7]));
}

// The number of points whose label differs from bj (vectorises; most blocks
// of a late step have none).
uword block_changes(const int* __restrict labels, const int* __restrict bj, uword m) {
  uword changed = 0;
  for (uword i = 0; i < m; ++i) changed += labels[i] != bj[i] ? 1 : 0;
  return changed;
}

// k-means++ as kmeans_plus_plus, in float (the same draws from rng).
void quick_seed(const arma::fmat& P, uword k, detail::Rng& rng, QuickKMeans& s) {
  const uword n = P.n_rows;
  s.centres.set_size(P.n_cols, k);
  s.centres.col(0) = P.row(rng.below(n)).t();
  block_distances(P.memptr(), n, P.n_cols, s.centres.colptr(0), n, s.d2.data());
  for (uword c = 1; c < k; ++c) {
    double total = 0.0;
    for (uword i = 0; i < n; ++i) total += s.d2[i];
    uword pick = 0;
    if (total > 0.0) {
      const double target = rng.uniform() * total;
      double cumulative = 0.0;
      for (uword i = 0; i < n; ++i) {
        if (s.d2[i] <= 0.0f) continue;
        pick = i;
        cumulative += s.d2[i];
        if (cumulative > target) break;
      }
    } else {
      pick = rng.below(n);
    }
    s.centres.col(c) = P.row(pick).t();
    block_distances(P.memptr(), n, P.n_cols, s.centres.colptr(c), n, s.nearest.data());
    for (uword i = 0; i < n; ++i) s.d2[i] = std::min(s.d2[i], s.nearest[i]);
  }
}

// Moves point i's contribution to the cluster sums from cluster `from` to `to`.
void quick_move(const arma::fmat& P, uword i, int from, int to, QuickKMeans& s) {
  for (uword r = 0; r < P.n_cols; ++r) {
    const double x = P.at(i, r);
    s.sums.at(static_cast<uword>(from), r) -= x;
    s.sums.at(static_cast<uword>(to), r) += x;
  }
  --s.count[static_cast<uword>(from)];
  ++s.count[static_cast<uword>(to)];
}

// Every point to its nearest centre (ties: lowest index), a block of points
// at a time so that the inner loops run over points and vectorise. Returns
// the number of labels that changed. A changed label moves the point's
// contribution to the sums (when valid), so late steps, which move few
// points, need no rebuild of the sums.
std::size_t quick_assign(const arma::fmat& P, QuickKMeans& s) {
  const uword n = P.n_rows, d = P.n_cols, k = s.centres.n_cols;
  s.half_norms.resize(k);
  for (uword j = 0; j < k; ++j) s.half_norms[j] = 0.5f * arma::dot(s.centres.col(j), s.centres.col(j));
  int* __restrict bj = s.best_j.data();
  std::size_t changed = 0;
  for (uword b = 0; b < n; b += kBlock) {
    const uword m = std::min(kBlock, n - b);
    block_nearest(P.memptr() + b, n, d, s.centres.memptr(), s.half_norms.data(), k, m, bj);
    int* labels = s.labels.data() + b;
    if (block_changes(labels, bj, m) == 0) continue;
    for (uword i = 0; i < m; ++i) {
      const int from = labels[i];
      if (from == bj[i]) continue;
      ++changed;
      if (s.sums_valid) quick_move(P, b + i, from, bj[i], s);
      labels[i] = bj[i];
    }
  }
  return changed;
}

// The cluster sums and counts from the labels. Four partial sums per
// cluster, point by point: consecutive points of one cluster then do not
// wait for each other's additions.
void rebuild_sums(const arma::fmat& P, QuickKMeans& s) {
  const uword n = P.n_rows, d = P.n_cols, k = s.centres.n_cols;
  constexpr uword kCopies = 4;
  s.partial.assign(kCopies * k * d, 0.0);
  std::fill(s.count.begin(), s.count.end(), 0);
  const float* x = P.memptr();
  for (uword i = 0; i < n; ++i) {
    const auto l = static_cast<uword>(s.labels[i]);
    double* t = s.partial.data() + ((i % kCopies) * k + l) * d;
    for (uword r = 0; r < d; ++r) t[r] += static_cast<double>(x[r * n + i]);
    ++s.count[l];
  }
  s.sums.set_size(k, d);
  for (uword j = 0; j < k; ++j)
    for (uword r = 0; r < d; ++r) {
      double sum = 0.0;
      for (uword c = 0; c < kCopies; ++c) sum += s.partial[(c * k + j) * d + r];
      s.sums(j, r) = sum;
    }
  s.sums_valid = true;
}

// The inertia of the labels about the current centres from the cluster
// sums, in double: sum |x|^2 - 2 sum_j c_j.S_j + sum_j n_j |c_j|^2, with
// sum |x|^2 = s.squares. The terms are of the size of the total variance,
// so double keeps the inertia to about 1e-13 of itself.
double quick_inertia(QuickKMeans& s) {
  double inertia = s.squares;
  for (uword j = 0; j < s.centres.n_cols; ++j) {
    double cross = 0.0, norm = 0.0;
    for (uword r = 0; r < s.centres.n_rows; ++r) {
      const double c = s.centres(r, j);
      cross += c * s.sums(j, r);
      norm += c * c;
    }
    inertia += static_cast<double>(s.count[j]) * norm - 2.0 * cross;
  }
  return std::max(inertia, 0.0);
}

// Each point's squared distance to its own centre, into s.nearest (only
// when a cluster is left empty, to find the point farthest from its centre).
void own_distances(const arma::fmat& P, QuickKMeans& s) {
  const uword n = P.n_rows, d = P.n_cols;
  for (uword i = 0; i < n; ++i) {
    const float* c = s.centres.colptr(static_cast<uword>(s.labels[i]));
    float sum = 0.0f;
    for (uword r = 0; r < d; ++r) {
      const float t = P(i, r) - c[r];
      sum += t * t;
    }
    s.nearest[i] = sum;
  }
}

// Centres to the cluster means (the sums, in double, match the labels). A
// cluster left empty takes the point farthest from its centre, as
// cluster_means; its label follows at the next step, so the sums are then
// rebuilt.
void quick_update(const arma::fmat& P, QuickKMeans& s) {
  const uword d = P.n_cols, k = s.centres.n_cols;
  arma::mat& sums = s.sums;
  if (std::find(s.count.begin(), s.count.end(), arma::uword{0}) != s.count.end()) own_distances(P, s);
  for (uword j = 0; j < k; ++j) {
    if (s.count[j] > 0) continue;
    const uword i = static_cast<uword>(std::max_element(s.nearest.begin(), s.nearest.end()) - s.nearest.begin());
    const auto from = static_cast<uword>(s.labels[i]);
    s.nearest[i] = -1.0f;  // not taken twice
    for (uword r = 0; r < d; ++r) {
      sums(from, r) -= P(i, r);
      sums(j, r) = P(i, r);
    }
    --s.count[from];
    s.count[j] = 1;
    s.sums_valid = false;
  }
  for (uword j = 0; j < k; ++j)
    if (s.count[j] > 0)
      for (uword r = 0; r < d; ++r)
        s.centres(r, j) = static_cast<float>(sums(j, r) / static_cast<double>(s.count[j]));
}

// Lloyd steps from s.centres until no label changes, the inertia fell by at
// most rtol of itself (a rise, only possible after re-seeding an empty
// cluster, does not stop), or max_iterations updates; labels and inertia
// always belong to the final centres.
void quick_lloyd(const arma::fmat& P, int max_iterations, double rtol, QuickKMeans& s) {
  std::fill(s.labels.begin(), s.labels.end(), -1);
  s.sums_valid = false;
  double previous = std::numeric_limits<double>::infinity();
  int updates = 0;
  while (true) {
    const std::size_t changed = quick_assign(P, s);
    if (!s.sums_valid) rebuild_sums(P, s);
    const double inertia = quick_inertia(s);
    s.inertia = inertia;
    const double drop = previous - inertia;
    if (changed == 0 || (drop >= 0.0 && drop <= rtol * inertia) || updates == max_iterations) break;
    previous = inertia;
    quick_update(P, s);
    ++updates;
  }
  s.iterations = updates;
}

}  // namespace

KMeansResult kmeans(const arma::mat& data, const KMeansOptions& opt) {
  require_points(data, static_cast<uword>(std::max(opt.k, 0)), "k-means");
  if (opt.restarts < 1 || opt.max_iterations < 1 || !(opt.tolerance >= 0.0))
    throw InputError("k-means: restarts and max_iterations must be >= 1 and tolerance >= 0, found " +
                     std::to_string(opt.restarts) + ", " + std::to_string(opt.max_iterations) +
                     " and " + std::to_string(opt.tolerance));
  const double tol = scaled_tolerance(data, opt.tolerance);
  std::vector<Run> runs(static_cast<std::size_t>(opt.restarts));
  detail::parallel_for(runs.size(), opt.threads, [&](std::size_t r) {
    detail::Rng rng(detail::derive_seed(opt.seed, {r}));
    runs[r] = lloyd(data, kmeans_plus_plus(data, static_cast<uword>(opt.k), rng),
                    opt.max_iterations, tol, opt.step);
  });
  std::size_t best = 0;
  for (std::size_t r = 1; r < runs.size(); ++r)
    if (runs[r].inertia < runs[best].inertia) best = r;
  order_clusters(runs[best]);
  return to_result(std::move(runs[best]), static_cast<int>(best));
}

KMeansResult kmeans_from(const arma::mat& data, const arma::mat& initial_centres,
                         int max_iterations, double tolerance, LloydStep step) {
  require_points(data, initial_centres.n_cols, "k-means from given centres");
  if (initial_centres.n_rows != data.n_rows)
    throw InternalError("k-means from given centres: the points have " +
                     std::to_string(data.n_rows) + " dimensions but the centres " +
                     std::to_string(initial_centres.n_rows));
  if (!initial_centres.is_finite())
    throw InputError("k-means from given centres: the initial centres hold NaN or Inf");
  if (max_iterations < 1 || !(tolerance >= 0.0))
    throw InputError("k-means from given centres: max_iterations must be >= 1 and tolerance >= 0");
  return to_result(lloyd(data, initial_centres, max_iterations,
                         scaled_tolerance(data, tolerance), step), 0);
}

std::vector<int> nearest_centroid(const arma::mat& data, const arma::mat& centroids) {
  if (centroids.n_cols == 0) throw InputError("nearest centroid: no centroids given");
  if (centroids.n_rows != data.n_rows)
    throw InternalError("nearest centroid: the points have " + std::to_string(data.n_rows) +
                     " dimensions but the centroids " + std::to_string(centroids.n_rows));
  if (!data.is_finite()) throw DataError("nearest centroid: the points hold NaN or Inf values");
  std::vector<int> labels(data.n_cols);
  for (uword i = 0; i < data.n_cols; ++i) {
    double best = std::numeric_limits<double>::infinity();
    for (uword j = 0; j < centroids.n_cols; ++j) {
      const double dd = sq_dist(data.colptr(i), centroids.colptr(j), data.n_rows);
      if (dd < best) {
        best = dd;
        labels[i] = static_cast<int>(j);
      }
    }
  }
  return labels;
}

double adjusted_rand_index(const std::vector<int>& a, const std::vector<int>& b) {
  if (a.size() != b.size())
    throw InternalError("adjusted Rand index: the partitions label " + std::to_string(a.size()) +
                     " and " + std::to_string(b.size()) + " points");
  auto pairs = [](double m) { return m * (m - 1.0) / 2.0; };
  std::map<int, double> rows, cols;
  std::map<std::pair<int, int>, double> cells;
  for (std::size_t i = 0; i < a.size(); ++i) {
    rows[a[i]] += 1.0;
    cols[b[i]] += 1.0;
    cells[{a[i], b[i]}] += 1.0;
  }
  double index = 0.0, sum_a = 0.0, sum_b = 0.0;
  for (const auto& [key, m] : cells) index += pairs(m);
  for (const auto& [key, m] : rows) sum_a += pairs(m);
  for (const auto& [key, m] : cols) sum_b += pairs(m);
  const double expected = a.size() < 2 ? 0.0 : sum_a * sum_b / pairs(static_cast<double>(a.size()));
  const double maximum = 0.5 * (sum_a + sum_b);
  // maximum == expected only when both are one cluster or both all singletons.
  if (maximum == expected) return 1.0;
  return (index - expected) / (maximum - expected);
}

}  // namespace isohypse

namespace isohypse {

void kmeans_quick(const arma::fmat& points, const QuickKMeansOptions& opt, QuickKMeans& s) {
  const uword n = points.n_rows, d = points.n_cols;
  if (d == 0) throw InternalError("quick k-means: the points have no dimensions");
  if (opt.k < 1 || static_cast<uword>(opt.k) > n)
    throw InputError("quick k-means: k = " + std::to_string(opt.k) + " must be in 1.." + std::to_string(n) +
                     " (the number of points)");
  if (opt.restarts < 1 || opt.max_iterations < 1 || !(opt.relative_inertia_change >= 0.0))
    throw InputError("quick k-means: restarts and max_iterations must be >= 1 and the relative inertia change >= 0");
  if (!points.is_finite()) throw DataError("quick k-means: the points hold NaN or Inf values");
  const auto k = static_cast<uword>(opt.k);
  s.nearest.resize(n);
  s.d2.resize(n);
  s.squares = sum_of_squares(points.memptr(), n * d);
  s.best_j.resize(kBlock);
  s.labels.resize(n);
  s.count.assign(k, 0);
  double best = std::numeric_limits<double>::infinity();
  int best_iterations = 0;
  for (int r = 0; r < opt.restarts; ++r) {
    detail::Rng rng(detail::derive_seed(opt.seed, {static_cast<std::uint64_t>(r)}));
    quick_seed(points, k, rng, s);
    quick_lloyd(points, opt.max_iterations, opt.relative_inertia_change, s);
    if (!(s.inertia < best)) continue;
    best = s.inertia;
    best_iterations = s.iterations;
    s.centroids = arma::conv_to<arma::mat>::from(s.centres);
    if (opt.restarts > 1) s.kept_labels = s.labels;
  }
  if (opt.restarts > 1) s.labels.swap(s.kept_labels);
  s.inertia = best;
  s.iterations = best_iterations;
}

}  // namespace isohypse
