#include "isohypse/numerics/classifiability.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <memory>
#include <string>

#include "isohypse/numerics/eof.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/numerics/kmeans.hpp"
#include "base/parallel.hpp"
#include "base/random.hpp"

namespace isohypse {
namespace {

using arma::uword;

// numpy.quantile's default (linear interpolation between order statistics).
double quantile(std::vector<double> v, double q) {
  std::sort(v.begin(), v.end());
  const double pos = q * static_cast<double>(v.size() - 1);
  const auto lo = static_cast<std::size_t>(std::floor(pos));
  const std::size_t hi = std::min(lo + 1, v.size() - 1);
  return v[lo] + (pos - static_cast<double>(lo)) * (v[hi] - v[lo]);
}

std::string format_table(const std::vector<RegimeCountRow>& table) {
  std::string s;
  char line[160];
  for (const auto& r : table) {
    std::snprintf(line, sizeof line, "\n  k = %d: index %.4f, surrogate level %.4f%s", r.k, r.index,
                  r.surrogate_level, r.significant ? " (significant)" : "");
    s += line;
  }
  return s;
}

// The columns of P scaled to unit length; NumericalError for a zero column
// (its anomaly correlation is undefined).
arma::mat unit_columns(const arma::mat& P) {
  arma::mat u(arma::size(P), arma::fill::none);
  for (uword j = 0; j < P.n_cols; ++j) {
    const double norm = arma::norm(P.col(j));
    if (norm == 0.0)
      throw NumericalError("anomaly correlation: a centroid is the zero vector (no anomaly)");
    u.col(j) = P.col(j) / norm;
  }
  return u;
}

// A(P, Q) for unit columns: min over columns i of P of the max over columns
// j of Q of their dot product (their anomaly correlation).
double similarity_of_unit(const arma::mat& P, const arma::mat& Q) {
  const uword d = P.n_rows;
  double worst = arma::datum::inf;
  for (uword i = 0; i < P.n_cols; ++i) {
    const double* p = P.colptr(i);
    double best = -arma::datum::inf;
    for (uword j = 0; j < Q.n_cols; ++j) {
      const double* q = Q.colptr(j);
      double dot = 0.0;
      for (uword r = 0; r < d; ++r) dot += p[r] * q[r];
      best = std::max(best, dot);
    }
    worst = std::min(worst, best);
  }
  return worst;
}

}  // namespace

double anomaly_correlation(const arma::vec& a, const arma::vec& b) {
  if (a.n_elem != b.n_elem)
    throw InternalError("anomaly correlation: vectors of " + std::to_string(a.n_elem) + " and " +
                     std::to_string(b.n_elem) + " elements");
  const double na = arma::norm(a), nb = arma::norm(b);
  if (na == 0.0 || nb == 0.0)
    throw NumericalError("anomaly correlation: a centroid is the zero vector (no anomaly)");
  return arma::dot(a, b) / (na * nb);
}

double partition_similarity(const arma::mat& P, const arma::mat& Q) {
  if (P.n_rows != Q.n_rows)
    throw InternalError("partition similarity: centroids of " + std::to_string(P.n_rows) + " and " +
                     std::to_string(Q.n_rows) + " dimensions");
  if (P.n_cols == 0 || Q.n_cols == 0)
    throw InternalError("partition similarity: a partition has no centroids");
  return similarity_of_unit(unit_columns(P), unit_columns(Q));
}

ClassifiabilityResult classifiability(const std::vector<arma::mat>& sets) {
  const std::size_t n = sets.size();
  if (n < 2)
    throw InternalError("classifiability: needs at least 2 partitions, found " + std::to_string(n));
  // Each set normalised once: A(P, Q) is then a min of maxima of dot products.
  std::vector<arma::mat> unit(n);
  for (std::size_t m = 0; m < n; ++m) {
    if (sets[m].n_rows != sets[0].n_rows || sets[m].n_cols == 0)
      throw InternalError("classifiability: partition " + std::to_string(m) + " has " +
                          std::to_string(sets[m].n_cols) + " centroids of " + std::to_string(sets[m].n_rows) +
                          " dimensions, partition 0 centroids of " + std::to_string(sets[0].n_rows));
    unit[m] = unit_columns(sets[m]);
  }
  ClassifiabilityResult r;
  r.similarity.eye(n, n);
  for (std::size_t m = 0; m < n; ++m)
    for (std::size_t q = 0; q < n; ++q)
      if (m != q) r.similarity(m, q) = similarity_of_unit(unit[m], unit[q]);
  const arma::vec row_sums = arma::sum(r.similarity, 1) - 1.0;  // without the diagonal
  r.index = arma::accu(row_sums) / static_cast<double>(n * (n - 1));
  r.best = static_cast<int>(row_sums.index_max());  // first maximum
  return r;
}

arma::mat red_noise_surrogate(const arma::mat& pcs, const std::vector<char>& consecutive,
                              std::uint64_t seed) {
  if (consecutive.size() != pcs.n_rows)
    throw InternalError("red-noise surrogate: " + std::to_string(pcs.n_rows) + " days but " +
                     std::to_string(consecutive.size()) + " consecutive-day flags");
  arma::mat out(arma::size(pcs));
  for (uword c = 0; c < pcs.n_cols; ++c) {
    const arma::vec x = pcs.col(c);
    // |r1| < 1 keeps the innovation variance positive for any estimate.
    const double r1 = std::clamp(lag1_autocorrelation(x, consecutive), -0.999, 0.999);
    const double mean = arma::mean(x), sigma = pcs.n_rows > 1 ? arma::stddev(x) : 0.0;
    const double innovation = sigma * std::sqrt(1.0 - r1 * r1);
    detail::Rng rng(detail::derive_seed(seed, {c}));
    double prev = 0.0;  // deviation from the mean
    for (uword t = 0; t < pcs.n_rows; ++t) {
      prev = (t > 0 && consecutive[t]) ? r1 * prev + innovation * rng.normal() : sigma * rng.normal();
      out(t, c) = mean + prev;
    }
  }
  return out;
}

namespace {

// Data set 0 is the data, 1..S the surrogates, each made once, in float
// and with one day per row, as kmeans_quick takes them.
std::vector<arma::fmat> float_data_sets(const arma::mat& pcs, const std::vector<char>& consecutive,
                                        const RegimeCountOptions& opt) {
  std::vector<arma::fmat> sets(static_cast<std::size_t>(opt.surrogates) + 1);
  sets[0] = arma::conv_to<arma::fmat>::from(pcs);
  for (std::size_t s = 1; s < sets.size(); ++s)
    sets[s] = arma::conv_to<arma::fmat>::from(
        red_noise_surrogate(pcs, consecutive, detail::derive_seed(opt.seed, {1, s})));
  return sets;
}

}  // namespace

std::vector<RegimeCountRow> regime_count_table(const arma::mat& pcs,
                                               const std::vector<char>& consecutive,
                                               const RegimeCountOptions& opt,
                                               const std::function<void(int, int)>& progress) {
  const std::string who = "regime count (classifiability)";
  if (opt.k_min < 2 || opt.k_max < opt.k_min || static_cast<uword>(opt.k_max) > pcs.n_rows)
    throw InputError(who + ": needs 2 <= k_min <= k_max <= " + std::to_string(pcs.n_rows) +
                     " days, found k_min = " + std::to_string(opt.k_min) +
                     ", k_max = " + std::to_string(opt.k_max));
  if (opt.runs < 2 || opt.surrogates < 1 || opt.restarts_per_run < 1 ||
      !(opt.level > 0.0 && opt.level < 1.0))
    throw InputError(who + ": needs runs >= 2, surrogates >= 1, restarts_per_run >= 1 and "
                     "0 < level < 1, found " + std::to_string(opt.runs) + ", " +
                     std::to_string(opt.surrogates) + ", " + std::to_string(opt.restarts_per_run) +
                     " and " + std::to_string(opt.level));
  if (consecutive.size() != pcs.n_rows)
    throw InternalError(who + ": " + std::to_string(pcs.n_rows) + " days but " +
                     std::to_string(consecutive.size()) + " consecutive-day flags");

  const std::vector<arma::fmat> sets = float_data_sets(pcs, consecutive, opt);
  const std::size_t n_sets = sets.size();

  const std::size_t n_k = static_cast<std::size_t>(opt.k_max - opt.k_min + 1);
  std::vector<ClassifiabilityResult> results(n_k * n_sets);
  detail::StatePool<QuickKMeans> buffers([] { return std::make_unique<QuickKMeans>(); });
  auto unit = [&](std::size_t u) {
    const std::size_t ki = u / n_sets, s = u % n_sets;
    const int k = opt.k_min + static_cast<int>(ki);
    auto state = buffers.lease();
    std::vector<arma::mat> centroid_sets(static_cast<std::size_t>(opt.runs));
    for (std::size_t run = 0; run < centroid_sets.size(); ++run) {
      QuickKMeansOptions ko;
      ko.k = k;
      ko.restarts = opt.restarts_per_run;
      ko.relative_inertia_change = kClassifiabilityInertiaChange;
      ko.seed = detail::derive_seed(opt.seed, {2, static_cast<std::uint64_t>(k), s, run});
      kmeans_quick(sets[s], ko, *state);
      centroid_sets[run] = state->centroids;
    }
    results[u] = classifiability(centroid_sets);
  };
  std::function<void(std::size_t, std::size_t)> report;
  if (progress)
    report = [&](std::size_t done, std::size_t total) {
      progress(static_cast<int>(done), static_cast<int>(total));
    };
  detail::parallel_for(results.size(), opt.threads, unit, report);

  std::vector<RegimeCountRow> table(n_k);
  for (std::size_t ki = 0; ki < n_k; ++ki) {
    std::vector<double> surrogate(n_sets - 1);
    for (std::size_t s = 1; s < n_sets; ++s) surrogate[s - 1] = results[ki * n_sets + s].index;
    RegimeCountRow& row = table[ki];
    row.k = opt.k_min + static_cast<int>(ki);
    row.index = results[ki * n_sets].index;
    row.best_run = results[ki * n_sets].best;
    row.surrogate_level = quantile(surrogate, opt.level);
    row.significant = row.index > row.surrogate_level + kSignificanceMargin;
  }
  return table;
}

int choose_regime_count(const std::vector<RegimeCountRow>& table) {
  const RegimeCountRow* best = nullptr;
  for (const auto& r : table)
    if (r.significant && (!best || r.index > best->index))
      best = &r;
  // Indices that differ by less than kIndexTie cannot be ranked with a few
  // tens of runs: among those, the k that stands farthest above red noise.
  if (best) {
    const double top = best->index;
    for (const auto& r : table)
      if (r.significant && r.index >= top - kIndexTie &&
          r.index - r.surrogate_level > best->index - best->surrogate_level)
        best = &r;
  }
  if (!best)
    throw NumericalError("choosing the number of regimes: no k in the range is significant (the "
                         "data's classifiability never exceeds the red-noise surrogates' level); "
                         "set k explicitly. Table:" + format_table(table));
  return best->k;
}

}  // namespace isohypse
