#include "isohypse/numerics/eof.hpp"

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "isohypse/base/error.hpp"
#include "base/random.hpp"

namespace isohypse {
namespace {

using arma::uword;

constexpr uword kExactLimit = 2500;   // Automatic: exact up to this min(n_space, n_time)
constexpr uword kBlock = 512;         // rows/columns converted to double at a time
constexpr int kMaxSubspaceIterations = 40;
constexpr double kRitzTolerance = 1e-6;  // relative change of retained eigenvalues; float products
                                         // put a noise floor near 1e-7 under it
constexpr int kInitialRandomizedCount = 20;
constexpr double kNegligible = 1e-12;  // eigenvalue / total variance treated as zero

void require_finite(const arma::fmat& X, const char* who) {
  if (!X.is_finite())
    throw DataError(std::string(who) + ": the weighted anomalies hold NaN or Inf values (" +
                    std::to_string(X.n_rows) + " x " + std::to_string(X.n_cols) +
                    "); fill or drop missing points before the EOF analysis");
}

arma::vec time_mean(const arma::fmat& X) {
  arma::vec sum(X.n_rows, arma::fill::zeros);
  for (uword t = 0; t < X.n_cols; ++t) {
    const float* col = X.colptr(t);
    for (uword i = 0; i < X.n_rows; ++i) sum[i] += col[i];
  }
  return sum / static_cast<double>(X.n_cols);
}

// f(first_row, B) for consecutive row blocks B = double(X rows) - mean rows:
// double accuracy without a double copy of the whole matrix. One buffer
// serves every block (fresh large allocations cost page faults each time).
template <class F>
void for_row_blocks(const arma::fmat& X, const arma::vec& mean, F&& f) {
  std::vector<double> buffer(std::min(kBlock, X.n_rows) * X.n_cols);
  for (uword r0 = 0; r0 < X.n_rows; r0 += kBlock) {
    const uword nb = std::min(kBlock, X.n_rows - r0);
    arma::mat B(buffer.data(), nb, X.n_cols, false, true);
    for (uword t = 0; t < X.n_cols; ++t) {
      const float* x = X.colptr(t) + r0;
      double* b = B.colptr(t);
      for (uword i = 0; i < nb; ++i) b[i] = static_cast<double>(x[i]) - mean[r0 + i];
    }
    f(r0, static_cast<const arma::mat&>(B));
  }
}

// The same over column blocks (days).
template <class F>
void for_col_blocks(const arma::fmat& X, const arma::vec& mean, F&& f) {
  std::vector<double> buffer(X.n_rows * std::min(kBlock, X.n_cols));
  for (uword c0 = 0; c0 < X.n_cols; c0 += kBlock) {
    const uword nb = std::min(kBlock, X.n_cols - c0);
    arma::mat B(buffer.data(), X.n_rows, nb, false, true);
    for (uword t = 0; t < nb; ++t) {
      const float* x = X.colptr(c0 + t);
      double* b = B.colptr(t);
      for (uword i = 0; i < X.n_rows; ++i) b[i] = static_cast<double>(x[i]) - mean[i];
    }
    f(c0, static_cast<const arma::mat&>(B));
  }
}

// Xc * Z and Xc^T * Q with the big product in float; the centring enters as
// a rank-one correction so that no centred copy of X is made.
arma::mat centred_times(const arma::fmat& X, const arma::vec& mean, const arma::mat& Z) {
  arma::mat Y = arma::conv_to<arma::mat>::from(X * arma::conv_to<arma::fmat>::from(Z));
  Y -= mean * arma::sum(Z, 0);
  return Y;
}

arma::mat centred_trans_times(const arma::fmat& X, const arma::vec& mean, const arma::mat& Q) {
  arma::mat Z = arma::conv_to<arma::mat>::from(X.t() * arma::conv_to<arma::fmat>::from(Q));
  Z.each_row() -= mean.t() * Q;
  return Z;
}

arma::mat orthonormal_basis(const arma::mat& Y) {
  arma::mat Q, R;
  if (!arma::qr_econ(Q, R, Y)) throw NumericalError("EOF analysis: QR factorisation failed");
  return Q;
}

// Number of EOFs to keep, given the leading eigenvalues known so far
// (descending): the requested count, or the fewest reaching the variance
// fraction (at most `cap`); 0 when the known ones do not reach the fraction
// and fewer than `cap` are known, so that more must be computed.
uword choose_count(const arma::vec& eig, double total, const EofOptions& opt, uword cap) {
  if (opt.count > 0) return static_cast<uword>(opt.count);
  double cumulative = 0.0;
  for (uword k = 0; k < eig.n_elem && k < cap; ++k) {
    // A negligible eigenvalue ends the search: with a fraction of 1 rounding
    // could otherwise pull in EOFs of zero variance.
    if (k > 0 && eig[k] <= kNegligible * total) return k;
    cumulative += eig[k];
    if (cumulative >= opt.variance_fraction * total) return k + 1;
  }
  return eig.n_elem >= cap ? cap : 0;
}

// A requested count beyond the rank of the data leaves EOFs without variance.
void require_variance(const arma::vec& sq, double total) {
  if (sq.back() <= kNegligible * total)
    throw NumericalError("EOF analysis: EOF " + std::to_string(sq.n_elem) +
                         " has no variance; the data have lower rank than the " +
                         std::to_string(sq.n_elem) + " EOFs requested");
}

struct Decomposition {
  arma::mat eofs;    // n_space x k
  arma::mat pcs;     // n_time x k
  arma::vec sq;      // s_k^2, descending
};

// Exact: eigen-decomposition of the smaller of Xc Xc^T and Xc^T Xc, both
// accumulated in double from blocks.
Decomposition exact_eofs(const arma::fmat& X, const arma::vec& mean, double sum_sq,
                         const EofOptions& opt, uword cap) {
  const uword n_space = X.n_rows, n_time = X.n_cols;
  const bool by_space = n_space <= n_time;
  const uword n = by_space ? n_space : n_time;
  arma::mat G(n, n, arma::fill::zeros);
  if (by_space)
    for_col_blocks(X, mean, [&](uword, const arma::mat& B) { G += B * B.t(); });
  else
    for_row_blocks(X, mean, [&](uword, const arma::mat& B) { G += B.t() * B; });

  arma::vec val;
  arma::mat vec;
  if (!arma::eig_sym(val, vec, G, "dc"))
    throw NumericalError("EOF analysis: the symmetric eigen-solver did not converge (" +
                         std::to_string(n) + " x " + std::to_string(n) + " matrix)");
  val = arma::reverse(arma::clamp(val, 0.0, arma::datum::inf));  // LAPACK: ascending
  vec = arma::fliplr(vec);

  Decomposition d;
  const uword k = choose_count(val, sum_sq, opt, cap);
  d.sq = val.head(k);
  require_variance(d.sq, sum_sq);
  if (by_space) {
    d.eofs = vec.head_cols(k);
    d.pcs.set_size(n_time, k);
    for_col_blocks(X, mean, [&](uword c0, const arma::mat& B) {
      d.pcs.rows(c0, c0 + B.n_cols - 1) = B.t() * d.eofs;
    });
  } else {
    const arma::rowvec s = arma::sqrt(d.sq).t();
    d.pcs = vec.head_cols(k);
    d.eofs.set_size(n_space, k);
    for_row_blocks(X, mean, [&](uword r0, const arma::mat& B) {
      arma::mat E = B * d.pcs;
      E.each_row() /= s;
      d.eofs.rows(r0, r0 + B.n_rows - 1) = E;
    });
    d.pcs.each_row() %= s;
  }
  return d;
}

// Randomized subspace iteration (Halko et al. 2011, Algorithm 4.4) with a
// convergence test on the retained Ritz values instead of a fixed number of
// power steps: geopotential spectra decay slowly, so a fixed q = 1-2 leaves
// percent-level errors in the trailing retained eigenvalues. Each step's
// W = Xc^T Q is also the Rayleigh-Ritz matrix (W^T = Q^T Xc), so the final
// SVD of W costs no extra pass over X.
Decomposition randomized_eofs(const arma::fmat& X, const arma::vec& mean, double sum_sq,
                              const EofOptions& opt, uword cap) {
  const uword n_time = X.n_cols;
  const uword max_width = std::min(X.n_rows, n_time);
  detail::Rng rng(detail::derive_seed(opt.seed, {0}));
  uword keep = opt.count > 0 ? static_cast<uword>(opt.count)
                             : std::min<uword>(cap, kInitialRandomizedCount);
  arma::mat warm;  // right singular vectors of the previous, narrower pass
  while (true) {
    // Oversampling as large as the retained set: the error of EOF k shrinks
    // by lambda_{width+1} / lambda_k per step, small only when width >> k.
    const uword width = std::min(max_width, keep + std::max<uword>(10, keep));
    arma::mat omega(n_time, width);
    omega.imbue([&] { return rng.normal(); });
    const uword n_warm = std::min(warm.n_cols, width);
    if (n_warm > 0) omega.head_cols(n_warm) = warm.head_cols(n_warm);

    arma::mat Q = orthonormal_basis(centred_times(X, mean, omega));
    arma::mat W;
    arma::vec ritz_old;
    for (int it = 0;; ++it) {
      W = centred_trans_times(X, mean, Q);
      const arma::vec all = arma::reverse(arma::eig_sym(arma::mat(W.t() * W)));
      arma::vec ritz = all.head(std::min(keep, all.n_elem));
      if (it + 1 >= kMaxSubspaceIterations ||
          (!ritz_old.empty() &&
           arma::max(arma::abs(ritz - ritz_old) / arma::clamp(ritz, 1e-300, arma::datum::inf)) <=
               kRitzTolerance))
        break;
      ritz_old = std::move(ritz);
      Q = orthonormal_basis(centred_times(X, mean, orthonormal_basis(W)));
    }

    arma::mat Vb, Ub;  // W = Vb S Ub^T
    arma::vec s;
    if (!arma::svd_econ(Vb, s, Ub, W, "both", "dc"))
      throw NumericalError("EOF analysis: SVD of the projected matrix failed");
    const arma::vec sq = arma::square(s);
    const uword k = choose_count(sq.head(std::min(keep, sq.n_elem)), sum_sq, opt, cap);
    if (k == 0) {  // fraction not reached yet: widen and warm-start
      keep = std::min(cap, 2 * keep);
      warm = Vb;
      continue;
    }
    Decomposition d;
    d.sq = sq.head(k);
    require_variance(d.sq, sum_sq);
    d.eofs = Q * Ub.head_cols(k);
    d.pcs = Vb.head_cols(k);
    d.pcs.each_row() %= s.head(k).t();
    return d;
  }
}

}  // namespace

double lag1_autocorrelation(const arma::vec& x, const std::vector<char>& consecutive) {
  if (consecutive.size() != x.n_elem)
    throw InternalError("lag-1 autocorrelation: " + std::to_string(x.n_elem) + " values but " +
                     std::to_string(consecutive.size()) + " consecutive-day flags");
  if (x.n_elem == 0) return 0.0;
  const double m = arma::mean(x);
  double c0 = 0.0, c1 = 0.0;
  uword pairs = 0;
  for (uword t = 0; t < x.n_elem; ++t) {
    c0 += (x[t] - m) * (x[t] - m);
    if (t > 0 && consecutive[t]) {
      c1 += (x[t - 1] - m) * (x[t] - m);
      ++pairs;
    }
  }
  if (pairs == 0 || c0 <= 0.0) return 0.0;
  return (c1 / static_cast<double>(pairs)) / (c0 / static_cast<double>(x.n_elem));
}

double effective_sample_size_mean(double n, double r1) { return n * (1.0 - r1) / (1.0 + r1); }

double effective_sample_size_variance(double n, double r1) {
  return n * (1.0 - r1 * r1) / (1.0 + r1 * r1);
}

double north_error(double eigenvalue, double n_effective) {
  return eigenvalue * std::sqrt(2.0 / n_effective);
}

EofResult compute_eofs(const arma::fmat& X, const std::vector<char>& consecutive,
                       const EofOptions& opt) {
  const uword n_space = X.n_rows, n_time = X.n_cols;
  if (X.is_empty()) throw InputError("EOF analysis: the anomaly matrix is empty");
  if (consecutive.size() != n_time)
    throw InternalError("EOF analysis: " + std::to_string(n_time) + " days but " +
                     std::to_string(consecutive.size()) + " consecutive-day flags");
  if (opt.max_count < 1) throw InputError("EOF analysis: max_count must be >= 1, found " +
                                          std::to_string(opt.max_count));
  if (opt.count < 0 || opt.count > opt.max_count)
    throw InputError("EOF analysis: count must be in 0.." + std::to_string(opt.max_count) +
                     " (max_count), found " + std::to_string(opt.count));
  if (opt.count == 0 && !(opt.variance_fraction > 0.0 && opt.variance_fraction <= 1.0))
    throw InputError("EOF analysis: variance_fraction must be in (0, 1], found " +
                     std::to_string(opt.variance_fraction));
  require_finite(X, "EOF analysis");
  if (n_time < 3)
    throw NumericalError("EOF analysis needs at least 3 days, found " + std::to_string(n_time));
  const uword rank_cap = std::min(n_space, n_time - 1);
  if (opt.count > 0 && static_cast<uword>(opt.count) > rank_cap)
    throw NumericalError("EOF analysis: " + std::to_string(opt.count) +
                         " EOFs requested but " + std::to_string(n_space) + " grid points and " +
                         std::to_string(n_time) + " days allow at most " +
                         std::to_string(rank_cap));
  const uword cap = std::min<uword>(rank_cap, static_cast<uword>(opt.max_count));

  EofResult r;
  r.mean = time_mean(X);
  double sum_sq = 0.0;
  for (uword t = 0; t < n_time; ++t) {
    const float* x = X.colptr(t);
    for (uword i = 0; i < n_space; ++i) sum_sq += (x[i] - r.mean[i]) * (x[i] - r.mean[i]);
  }
  if (!(sum_sq > 0.0)) throw NumericalError("EOF analysis: the anomalies have no variance");

  const bool exact = opt.method == EofOptions::Method::Exact ||
                     (opt.method == EofOptions::Method::Automatic &&
                      std::min(n_space, n_time) <= kExactLimit);
  Decomposition d = exact ? exact_eofs(X, r.mean, sum_sq, opt, cap)
                          : randomized_eofs(X, r.mean, sum_sq, opt, cap);
  r.method = exact ? "exact" : "randomized";

  // Signs: largest |loading| positive, so reruns and methods agree.
  for (uword k = 0; k < d.eofs.n_cols; ++k) {
    if (d.eofs(arma::abs(d.eofs.col(k)).index_max(), k) < 0.0) {
      d.eofs.col(k) *= -1.0;
      d.pcs.col(k) *= -1.0;
    }
  }
  const double dof = static_cast<double>(n_time - 1);
  r.eofs = std::move(d.eofs);
  r.pcs = std::move(d.pcs);
  r.eigenvalues = d.sq / dof;
  r.total_variance = sum_sq / dof;
  r.explained = d.sq / sum_sq;
  r.effective_n.set_size(r.eofs.n_cols);
  r.north_error.set_size(r.eofs.n_cols);
  for (uword k = 0; k < r.eofs.n_cols; ++k) {
    r.effective_n[k] = effective_sample_size_variance(
        static_cast<double>(n_time), lag1_autocorrelation(r.pcs.col(k), consecutive));
    r.north_error[k] = north_error(r.eigenvalues[k], r.effective_n[k]);
  }
  return r;
}

arma::mat project_onto_eofs(const arma::fmat& X, const arma::vec& mean, const arma::mat& eofs) {
  if (X.n_rows != mean.n_elem || X.n_rows != eofs.n_rows)
    throw InternalError("EOF projection: the data have " + std::to_string(X.n_rows) +
                     " grid points, the stored mean " + std::to_string(mean.n_elem) +
                     " and the stored EOFs " + std::to_string(eofs.n_rows));
  require_finite(X, "EOF projection");
  arma::mat pcs(X.n_cols, eofs.n_cols);
  for_col_blocks(X, mean, [&](uword c0, const arma::mat& B) {
    pcs.rows(c0, c0 + B.n_cols - 1) = B.t() * eofs;
  });
  return pcs;
}

}  // namespace isohypse
