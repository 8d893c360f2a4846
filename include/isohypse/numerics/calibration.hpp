// Recalibration of regime probabilities (../shared/METHODS.md §8):
//
// - Blend with the climatological frequencies (common practice; a
//   one-parameter recalibration): p_cal = c + a (p_raw - c). The least
//   mean multi-category Brier score over the cases i has the closed form
//     a = sum_i (p_i - c_i).(o_i - c_i) / sum_i |p_i - c_i|^2,
//   clipped to [0, 1] (a = 1 keeps the raw probabilities, a = 0 is
//   climatology). METHODS.md §8 check: a = 0.926606.
//   Where the cases fall into independent groups (season years), the fit's
//   doubt is its jackknife standard error over the groups (one group left
//   out at a time; Efron 1982, The Jackknife, the Bootstrap and Other
//   Resampling Plans, ch. 3), and the coefficient is shrunk towards 0 by
//   max(0, 1 - (z SE / a)^2) before the clip (a positive-part shrinkage of
//   the James-Stein type; the form and z = 2 are our choice): a coefficient
//   within about two standard errors of 0 is noise, and a system without
//   skill falls back to climatology instead of keeping a tenth of its noise.
// - Multinomial logistic regression (common practice for calibrating
//   category probabilities; the reference library in the tests is
//   scikit-learn's LogisticRegression, multinomial, L2): one weight vector
//   and intercept per state, minimising
//     sum_i -log p(o_i | x_i) + |W|^2 / (2 C)
//   (the intercepts unpenalised), as scikit-learn does with penalty "l2"
//   and C. Solved by Newton's method to a gradient of 1e-9 per case; the
//   intercepts sum to zero (the softmax leaves their common shift free).
//   Features: the log raw probabilities with half a member added to each
//   state, log((p m + 1/2) / (m + S/2)) for m members and S states, and the
//   log climatological frequencies.
#pragma once

#include <armadillo>
#include <string>
#include <vector>

namespace isohypse {

// The closed-form blend coefficient over the cases (rows of p and c, one
// column per state; observed: the observed state of each case, 0..S-1),
// clipped to [0, 1]. NaN when there is no case or every p equals its c (no
// information). Throws InternalError when the sizes differ or a state is
// out of range.
double blend_coefficient(const arma::mat& p, const arma::mat& c, const std::vector<int>& observed);

// The sums of the closed form over some cases (the numerator and the
// denominator, unclipped), so that groups of cases can be combined; and
// the sampling noise in the denominator, for another ensemble size.
//
// Ensemble size: a raw probability from m members scatters about the
// probability of an infinite ensemble, pi, by sum_k pi_k (1 - pi_k) / m in
// the squared distance |p - c|^2 (members drawn independently; the numerator
// does not change in expectation). Per case, q = sum_k p_k (1 - p_k) / (m - 1)
// estimates that term without bias (common practice: the binomial variance
// of a sample proportion). `noise` sums q, `noise_members` sums q m, so that
// for an operational ensemble of M members the denominator becomes
//   denominator - noise + noise_members / M
// (a larger ensemble scatters less, so the fitted damping is relaxed; with
// M = m the sums are unchanged). Members of a lagged ensemble are neither
// independent nor alike, so this is an approximation.
struct BlendSums {
  double numerator = 0, denominator = 0;
  arma::uword cases = 0;
  double noise = 0, noise_members = 0;
};
// Adds b's sums to a's (groups of cases combined).
BlendSums& operator+=(BlendSums& a, const BlendSums& b);
// members: per case, the members behind p (empty: no noise terms).
BlendSums blend_sums(const arma::mat& p, const arma::mat& c, const std::vector<int>& observed,
                     const arma::vec& members = arma::vec());
// The sums as they would be for an ensemble of `members` members (see above).
BlendSums for_ensemble(const BlendSums& s, double members);

// The blend coefficient of groups of cases: the closed form over all of
// them (`fitted`, unclipped), its jackknife standard error over the groups
// that hold cases (`standard_error`, NaN with fewer than two), and
// `coefficient`: fitted shrunk by max(0, 1 - (z SE / fitted)^2) (none when
// z = 0 or SE is NaN) and clipped to [0, 1]. All NaN when no group holds
// information (denominator 0).
struct ShrunkBlend {
  double fitted = 0, standard_error = 0, coefficient = 0;
};
ShrunkBlend shrunk_blend_coefficient(const std::vector<BlendSums>& groups, double z);

// c + a (p - c), row by row (the rows still sum to 1 when p's and c's do).
arma::mat blend_probabilities(const arma::mat& p, const arma::mat& c, double a);

// The features of the logistic method: rows = cases; columns: S log raw
// probabilities (half a member added to each state, `members` per case),
// then S log climatological frequencies (each floored at 1e-6).
arma::mat logistic_features(const arma::mat& p, const arma::vec& members, const arma::mat& c);

struct LogisticModel {
  arma::mat weights;     // S x n_features
  arma::vec intercepts;  // S, summing to 0
  double penalty_c = 1.0;
  int iterations = 0;    // Newton steps taken
};

// Fits the model (n_states >= 2 states, y in 0..n_states-1, X rows = cases)
// by Newton's method from zero, or from `start` when it is given and of the
// right shape (a fit on similar cases: the leave-one-year-out refits start
// from the fit on every year, and the optimum is the same to the stopping
// rule). Throws InputError when there is no case or C <= 0; NumericalError
// when Newton's method does not converge in 100 steps.
LogisticModel fit_multinomial_logistic(const arma::mat& X, const std::vector<int>& y, int n_states,
                                       double penalty_c, const LogisticModel* start = nullptr);

// Probabilities (rows = cases, S columns) of a fitted model.
arma::mat logistic_probabilities(const LogisticModel& model, const arma::mat& X);

}  // namespace isohypse
