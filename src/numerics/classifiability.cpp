#include "isohypse/numerics/classifiability.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "isohypse/numerics/eof.hpp"
#include "isohypse/base/error.hpp"
#include "base/random.hpp"

namespace isohypse {
namespace {

using arma::uword;

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

// The jackknife standard error of the index: run i left out removes its row
// and its column from the sum of the pairs.
double jackknife_spread(const arma::mat& similarity, double total) {
  const uword n = similarity.n_rows;
  if (n < 3) return 0.0;
  const arma::vec rows = arma::sum(similarity, 1) - 1.0;
  const arma::rowvec cols = arma::sum(similarity, 0) - 1.0;
  arma::vec left_out(n);
  const double pairs = static_cast<double>((n - 1) * (n - 2));
  for (uword i = 0; i < n; ++i) left_out(i) = (total - rows(i) - cols(i)) / pairs;
  const double mean = arma::mean(left_out);
  const double nd = static_cast<double>(n);
  return std::sqrt((nd - 1.0) / nd * arma::accu(arma::square(left_out - mean)));
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
  const double total = arma::accu(row_sums);
  r.index = total / static_cast<double>(n * (n - 1));
  r.best = static_cast<int>(row_sums.index_max());  // first maximum
  r.spread = jackknife_spread(r.similarity, total);
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

}  // namespace isohypse
