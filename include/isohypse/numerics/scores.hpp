// Verification scores for regime guidance: pure functions, no file I/O.
//
// Formulas follow Wilks (2011), Statistical Methods in the Atmospheric
// Sciences, 3rd ed., ch. 8. Conventions shared by every function here:
// - A binary event: forecast probabilities p in [0, 1], outcomes o in {0, 1},
//   one case per element, p and o of equal, non-zero length. NaN, values
//   outside [0, 1], or outcomes other than 0 and 1 throw InputError; the
//   caller removes missing cases first.
// - Categories (regimes, with "no regime" as one more category if used) are
//   labelled 0 .. K-1. Regimes are not ordered, so no ranked score (RPS) is
//   offered.
// - A score that is undefined for the data (a skill score against a perfect
//   reference, a ROC area with one class only) is NaN, not an exception.
#pragma once

#include <armadillo>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <vector>

namespace isohypse {

// Brier (1950) score: mean of (p - o)^2 over the cases. 0 is perfect, 1 the
// worst. Throws InputError naming both sizes when they differ or are 0.
double brier_score(const arma::vec& p, const arma::vec& o);

// Decomposition of the Brier score over groups k of n_k cases, with pbar_k
// the group's mean forecast, obar_k its observed frequency, N all cases:
//   reliability           REL = (1/N) sum_k n_k (pbar_k - obar_k)^2
//   resolution            RES = (1/N) sum_k n_k (obar_k - obar)^2
//   uncertainty           UNC = obar (1 - obar),   obar = base_rate = mean(o)
//   within_bin_variance   WBV = (1/N) sum_k sum_(j in k) (p_j - pbar_k)^2
//   within_bin_covariance WBC = (2/N) sum_k sum_(j in k) (o_j - obar_k)(p_j - pbar_k)
// and brier = REL - RES + UNC + WBV - WBC exactly (to rounding, ~1e-15):
// Murphy (1973), J. Appl. Meteor. 12, 595-600, for the first three;
// Stephenson, Coelho & Jolliffe (2008), Wea. Forecasting 23, 752-757, for
// the two within-bin terms that binning adds. brier is always the Brier
// score of the cases themselves. All terms are >= 0 except WBC (either sign).
struct BrierParts {
  double brier, reliability, resolution, uncertainty;
  double base_rate;
  double within_bin_variance = 0.0, within_bin_covariance = 0.0;
};
// With empty bin_edges, the cases are grouped by distinct forecast value
// (pbar_k is that value), so WBV = WBC = 0 and brier = REL - RES + UNC; the
// terms are then meaningless for continuous probabilities (one case per
// group: REL ~ BS, RES ~ UNC). With bin_edges (strictly increasing, covering
// every p; bins [e_i, e_i+1), the last one closed) the cases are grouped by
// bin, empty bins are skipped, and all five terms are computed. Throws
// InputError as brier_score does, and for unusable bin edges.
BrierParts brier_decomposition(const arma::vec& p, const arma::vec& o,
                               const arma::vec& bin_edges = {});
// The decomposition over n_bins bins of fixed width 1 / n_bins over [0, 1]
// (edges i / n_bins, correctly rounded; the same bins as reliability_diagram).
// Throws InputError as brier_score does, and for n_bins < 2.
BrierParts binned_brier_decomposition(const arma::vec& p, const arma::vec& o, int n_bins = 10);

// Skill score 1 - score / reference for a negatively oriented score (Brier,
// multi-category Brier): 1 is perfect, 0 no better than the reference,
// negative worse. NaN when reference is 0 (a perfect reference leaves no room
// for skill).
double skill_score(double score, double reference);

// Multi-category Brier score of one forecast: sum_k (p_k - o_k)^2 with o the
// one-hot vector of the observed category (0-based). 0 is perfect, 2 the
// worst. p is not required to sum to 1 (callers may round). Throws InputError
// for an empty p, a p_k outside [0, 1], or observed outside 0 .. K-1.
double multicategory_brier(const arma::rowvec& p, int observed);
// Mean of the above over the rows of p (n cases x K categories), row i
// observed in category observed[i]. A separate name, because a matrix
// converts to a row vector and would make an overload ambiguous. Throws
// InputError naming both sizes when p.n_rows != observed.size() or either is
// 0, and as above per row.
double mean_multicategory_brier(const arma::mat& p, const std::vector<int>& observed);

// Area under the ROC curve as the Mann-Whitney statistic (Mason & Graham
// 2002): the fraction of (event, non-event) pairs in which the event case
// has the higher probability, ties counted half. 1 is perfect, 0.5 no
// discrimination. Exact pair counting, O(N log N). NaN when only one class
// is present. Throws InputError as brier_score does.
double roc_area(const arma::vec& p, const arma::vec& o);

// One bin of a reliability diagram.
struct ReliabilityBin {
  double lower, upper;        // bin edges: [lower, upper), the last one closed
  double mean_forecast;       // mean p of the bin's cases; NaN if count == 0
  double observed_frequency;  // mean o of the bin's cases; NaN if count == 0
  std::size_t count;          // number of cases in the bin
  // Consistency bar: the range of observed frequency a reliable forecast
  // would give in this bin (see reliability_diagram_with_bars); NaN when not
  // computed or count == 0.
  double bar_lower, bar_upper;
};
// n_bins equal-width bins over [0, 1] (edges i / n_bins, correctly rounded),
// all reported (empty ones with count 0); bar_lower and bar_upper are NaN.
// Throws InputError as brier_score does and for n_bins < 1.
std::vector<ReliabilityBin> reliability_diagram(const arma::vec& p, const arma::vec& o,
                                                int n_bins = 10);
// The same bins with consistency bars (Broecker & Smith 2007, Wea.
// Forecasting 22, 651-661): for each non-empty bin, `resamples` times, every
// case of the bin is redrawn as o_j ~ Bernoulli(p_j) (what a RELIABLE
// forecast would produce) and the bin's observed frequency recomputed;
// bar_lower and bar_upper are the (1 - level)/2 and (1 + level)/2 quantiles
// of those frequencies (linear interpolation, numpy's default). An observed
// frequency outside the bar is unlikely under reliability. Deterministic for
// a seed (own mapping of std::mt19937_64 to [0, 1), the same on every
// standard library; bins drawn in order from one generator). Throws
// InputError as reliability_diagram does, for resamples < 1, and for level
// outside (0, 1).
std::vector<ReliabilityBin> reliability_diagram_with_bars(const arma::vec& p, const arma::vec& o, int n_bins,
                                                          int resamples, double level, std::uint64_t seed);

// The reliability term that sampling alone gives a RELIABLE forecast with
// the probabilities p, binned as binned_brier_decomposition bins them: case
// j happens with its own probability p_j, as o_j = [u < p_j] with u uniform;
// cases with the same `event` key (the same valid date scored from several
// issues or leads: one observed outcome) share one u, other cases are
// independent (no key: all independent). obar_k then has mean pbar_k and
// variance (1/n_k^2) sum_(i, j in k, same event) (min(p_i, p_j) - p_i p_j),
// so the mean is exact:
//   E[REL] = (1/N) sum_k n_k var(obar_k)
// (with independent cases (1/N) sum_k (1/n_k) sum_(j in k) p_j (1 - p_j):
// the bias of the binned reliability term that Ferro & Fricker 2012,
// Q. J. R. Meteorol. Soc. 138, 1954-1960, correct for; from memory).
// `upper` is its `level` quantile from `resamples` redraws of the outcomes
// (as the consistency bars, Broecker & Smith 2007), NaN when resamples is 0.
// A REL below `upper` cannot be told from a reliable forecast's with these
// cases. Consecutive days' events are still drawn independently, so with
// persistent weather this remains a lower bound of what sampling can
// produce. Throws InputError for an empty p, an event key list of another
// length, n_bins < 2, resamples < 0 or level outside (0, 1).
struct ReliabilityFloor {
  double mean = 0.0, upper = 0.0;
};
ReliabilityFloor reliable_reliability(const arma::vec& p, int n_bins, int resamples, double level,
                                      std::uint64_t seed, const std::vector<std::int64_t>& event = {});

// K x K contingency table of categorical forecasts against observations:
// ROWS are forecast categories, COLUMNS observed categories; entry (i, j)
// counts cases forecast i and observed j. Throws InputError when the sizes
// differ or are 0, K < 1, or a label lies outside 0 .. K-1 (naming the case).
arma::umat contingency(const std::vector<int>& forecast, const std::vector<int>& observed, int K);

// Heidke skill score (PC - E) / (1 - E), PC = sum_k n_kk / N,
// E = sum_k n_k. n_.k / N^2 (the proportion correct by chance). Identical to
// Cohen's kappa. NaN when E == 1 (one category used by both). The functions
// on tables throw InputError for a non-square or all-zero table.
double heidke_skill(const arma::umat& table);
// Frequency bias per category, B_k = n_k. / n_.k (forecast count over
// observed count): 1 unbiased, > 1 over-forecast. Inf when a category is
// forecast but never observed, NaN when neither.
arma::vec frequency_bias(const arma::umat& table);
// Proportion correct sum_k n_kk / N.
double proportion_correct(const arma::umat& table);

// A point estimate with a confidence interval.
struct Interval {
  double estimate, lower, upper;
  // Resamples whose statistic was finite (the others are left out of the
  // percentiles); lower and upper are NaN when none was.
  std::size_t finite_resamples = 0;
};

}  // namespace isohypse
