// Ensemble statistics of regime forecasts: from the daily regime labels of
// the members of a lagged ensemble to regime probabilities, window summaries,
// persistence and transitions. Pure computations, no file I/O.
//
// Lagged ensemble (Hoffman & Kalnay 1983, "Lagged average forecasting, an
// alternative to Monte Carlo forecasting", Tellus 35A, 100-118): the members
// of successive initialisations valid on the same day are pooled, each with
// the weight of its initialisation. Transition probabilities are the
// maximum-likelihood Markov estimate (Anderson & Goodman 1957, Ann. Math.
// Statist. 28, 89-110), here with each member's transitions weighted.
//
// Conventions for the whole header:
// - Days are integer offsets from the issue date (day 0); negative offsets
//   are valid days before it (older initialisations reach back there).
// - States are 0..n_states-1; the caller maps "no regime" to n_states-1 and
//   it is treated like any other state, so probabilities sum to 1.
// - Every function taking tracks validates them at entry and throws
//   InputError naming the function and the offending values when
//   n_states < 2, a track's weight is not finite and > 0, or a label is
//   outside 0..n_states-1 (the message names the track's initialisation,
//   member and day offset). A window or day range needs first <= last.
// - Outputs are deterministic: they depend only on the inputs, summed in
//   track order.
#pragma once

#include <armadillo>
#include <string>
#include <vector>

namespace isohypse {

// Lagged-ensemble weights: one weight per initialisation from its age in
// days before the issue date (age >= 0).
//   Equal:       w = 1
//   Linear:      w = 1 - age / (max_age + 1), max_age = the largest age given,
//                so the newest (age 0) has 1 and the oldest keeps a positive
//                weight 1 / (max_age + 1) (ages 0, 1, 2 -> 1, 2/3, 1/3)
//   Exponential: w = exp(-age / timescale_days)
// Weights are relative: the statistics below divide by their sum.
enum class WeightScheme { Equal, Linear, Exponential };

struct Weighting {
  WeightScheme scheme = WeightScheme::Equal;
  double timescale_days = 5.0;  // e-folding time, used by Exponential only; > 0

  // Parses "equal", "linear" or "exp:DAYS" (DAYS a finite number > 0, e.g.
  // "exp:3" or "exp:2.5"). Throws InputError quoting the text and listing
  // the valid forms.
  static Weighting parse(const std::string& text);
  // The form parse() reads back: "equal", "linear", "exp:3".
  std::string to_string() const;
};

// Weights for initialisations of the given ages (days, each >= 0), in the
// same order; empty in, empty out. Throws InputError for a negative age or
// a timescale that is not finite and > 0 (Exponential).
std::vector<double> initialisation_weights(const std::vector<int>& ages_days, const Weighting& w);

// One member of one initialisation: its regime label on consecutive valid days.
struct MemberTrack {
  std::string initialisation;  // e.g. "2025-12-01"; in error messages, and window_summary counts distinct ones
  int member = 0;
  double weight = 1.0;         // the weight of its initialisation; finite, > 0
  int first_offset = 0;        // valid day of labels[0], in days after the issue date
  std::vector<int> labels;     // 0..n_states-1 per consecutive day (may be empty)
};

// The pooled forecast for one valid day.
struct DayProbabilities {
  int offset = 0;              // day offset
  arma::vec probability;       // n_states, p_k = sum_m w_m 1[label_m = k] / sum_m w_m; sums to 1
  int most_likely = 0;         // index of the largest p_k; ties (within 1e-12) go to the lowest index
  int members = 0;             // members covering the day
  double weight_sum = 0.0;     // sum of their weights
};

// One entry for each day offset in [first, last] that at least one member
// covers, in increasing offset order; days no member covers are left out
// (so the result may be empty).
std::vector<DayProbabilities> daily_probabilities(const std::vector<MemberTrack>& tracks, int n_states,
                                                  int first, int last);

// The least share of a window's days a member must cover for its vote in the
// window's dominance: 0.8, so that at long leads the older initialisations of
// a lag, which stop a few days short of the window's end, still count (see
// window_summary in the .cpp for the reasoning).
inline constexpr double kDominanceMinCoverage = 0.8;

// Summary of the days first..last (offsets, inclusive, e.g. 1..3).
struct WindowSummary {
  int first = 0, last = 0;
  // n_states: sum over the window's days of p_k(day) (daily_probabilities);
  // a day no member covers adds nothing, so the entries sum to the number
  // of covered days.
  arma::vec expected_days;
  // n_states: weighted fraction of members whose most frequent state in the
  // window is k, ties split equally among the tied states. Only members
  // covering at least kDominanceMinCoverage of the window's days count, each
  // with its most frequent state over the days it covers; NaN for every k
  // when none does.
  arma::vec dominance;
  int members = 0;                 // members counted for dominance
  double member_weight = 0.0;      // the sum of their weights (0 when none)
  int initialisations = 0;         // distinct MemberTrack::initialisation among them
  // n_states x n_states: weighted counts (sum of member weights) of
  // day-to-day transitions from row state to column state, over all members
  // and every pair of consecutive days both inside the window and in the track.
  arma::mat transition_counts;
  // transition_counts normalised by row; a row without counts is NaN.
  arma::mat transition;
};

WindowSummary window_summary(const std::vector<MemberTrack>& tracks, int n_states, int first, int last);

// Persistence on one valid day.
struct AgeDistribution {
  int offset = 0;
  // max_age entries: entry a-1 is the weighted fraction of members whose
  // current state is a days old (age 1 = the state began that day); the
  // last entry is "max_age days or more". Sums to 1.
  arma::vec probability;
  double mean_age = 0.0;  // weighted mean of the (uncapped) ages, days
};

// For each day offset in [first, last] that at least one member covers (in
// increasing order, uncovered days left out as in daily_probabilities): the
// distribution of how long each member has been in its current state. A run
// is counted back to the member's first day only, so at a member's first day
// the age is 1 whatever happened before. Throws InputError when max_age < 1.
std::vector<AgeDistribution> current_age(const std::vector<MemberTrack>& tracks, int n_states, int first,
                                         int last, int max_age = 15);

// Chance that the spell under way at the issue date lasts: the members that
// cover day 0 (the initialisations within the lag whose leads reach the
// issue date), each in its state on day 0, and whether it stays there.
struct LastingProbability {
  std::vector<int> horizons;  // n, days
  // n_states x horizons.size(): given a member is in state k on day 0, the
  // weighted probability that it is still in k on each of days 1..n. Only
  // members whose track covers days 0..n count. NaN where none does.
  arma::mat probability;
  // n_states x horizons.size(): the number of members behind each
  // probability (unweighted).
  arma::mat cases;
};

// Throws InternalError when horizons is empty or holds a value < 1.
LastingProbability lasting_probability(const std::vector<MemberTrack>& tracks, int n_states,
                                       const std::vector<int>& horizons = {3, 5, 7});

// Age in days of the current state at the end of an observed label sequence:
// the length of the run ending at the last day. consecutive[t] != 0 when day
// t immediately follows day t-1, as isohypse/field.hpp's consecutive_flags
// gives; a 0 flag (gap or season break) breaks the run, and so does a label
// -1 ("unknown"). Returns 0 for an empty sequence or when the last label is
// -1. Throws InputError when the lengths differ or a label is < -1.
int current_run_length(const std::vector<int>& labels, const std::vector<char>& consecutive);

}  // namespace isohypse
