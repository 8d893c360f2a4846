// The scores of one set of verification cases (a lead, a window, a month),
// shared by the steps "score by lead" and "score by window" (private to the
// verify stage). `idx` are indices into cases.list; the climatological
// forecast of each case (StateClimatology::reference of its valid month: the
// season's frequencies, or the month's with --all-months) is the reference of
// every skill score.
// Formulas and sources: numerics/scores.hpp (Wilks 2011).
#pragma once

#include <cmath>
#include <cstddef>
#include <nlohmann/json.hpp>
#include <vector>

#include "isohypse/stages/verify.hpp"
#include "stages/verify/verification_cases.hpp"

namespace isohypse::verification {

// The headline scores of the most likely regime and the probabilities.
struct HeadlineScores {
  std::size_t n = 0;  // cases
  double hit_rate = NAN, heidke = NAN, brier = NAN, brier_skill = NAN;  // NaN for no case
};
enum class Headline { HitRate, Heidke, BrierSkill };

// Hit rate of the most likely state, Heidke skill of its contingency table,
// multi-category Brier score and its skill against climatology. Throws
// InternalError when a case's probabilities are not one per state.
HeadlineScores headline_scores(const Cases& cases, const std::vector<std::size_t>& idx,
                               const StateClimatology& climatology);

// {"estimate", "lower", "upper", "block_days", "blocks"[, "note"]} of one
// headline score: a moving-block bootstrap over consecutive issue dates
// (numerics/block_bootstrap.hpp) with config's block length, resamples,
// confidence and seed, clamped to [0, 1] for the hit rate and to at most 1
// for the skill scores. lower and upper are null, and "note" says why, when
// the period holds fewer than 3 blocks. idx not empty.
nlohmann::json headline_interval(const Cases& cases, const std::vector<std::size_t>& idx,
                                 const StateClimatology& climatology, Headline which, const VerifyConfig& config);

// Per state: Brier score and its five-term decomposition over
// config.reliability_bins bins of fixed width (reliability, resolution,
// uncertainty, within_bin_variance, within_bin_covariance: brier = REL - RES
// + UNC + WBV - WBC; Stephenson et al. 2008), base rate, Brier skill against
// climatology and ROC area; reliability_sampling_mean, what sampling alone
// gives a reliable forecast with these probabilities (numerics/scores.hpp
// reliable_reliability; the cases of one valid date share its outcome),
// reliability_beyond_sampling = reliability - that mean (the bias-corrected
// term of Ferro & Fricker 2012), and with `resample` the sampling term's
// config.confidence quantile reliability_sampling_upper
// (kConsistencyResamples redraws, config.seed).
nlohmann::json state_scores_json(const Cases& cases, const std::vector<std::size_t>& idx,
                                 const StateClimatology& climatology, const VerifyConfig& config, bool resample);

// Resamples behind each consistency bar of the reliability diagram.
inline constexpr int kConsistencyResamples = 1000;

// The reliability-diagram bins with consistency bars (Broecker & Smith 2007)
// of probabilities p against outcomes o (0 or 1), in config.reliability_bins
// bins at config.confidence: lower, upper, mean_forecast, observed_frequency,
// count, consistency_lower, consistency_upper (NaN as null).
nlohmann::json reliability_bins_json(const arma::vec& p, const arma::vec& o, const VerifyConfig& config);

// Reliability diagram of every state's probabilities pooled, in
// config.reliability_bins bins: per bin its edges, mean forecast, observed
// frequency, count, and the consistency bar (consistency_lower,
// consistency_upper: the central config.confidence range of a reliable
// forecast's frequency, kConsistencyResamples resamples, config.seed;
// Broecker & Smith 2007). Nulls for an empty bin.
nlohmann::json reliability_json(const Cases& cases, const std::vector<std::size_t>& idx, std::size_t n_states,
                                const VerifyConfig& config);

// Per state: most_likely_days (cases whose most likely state it is),
// observed_days, bias = most_likely_days / observed_days (the categorical
// frequency bias of ../shared/METHODS.md §6; null where the state is neither
// forecast nor observed, inf shown as null where forecast but never
// observed), and beside it expected_days (summed probabilities) with
// probability_bias = expected_days / observed_days.
nlohmann::json frequency_bias_json(const Cases& cases, const std::vector<std::size_t>& idx,
                                   const std::vector<std::string>& states);

}  // namespace isohypse::verification
