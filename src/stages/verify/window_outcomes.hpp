// What happened over a lead window and what climatology expects of one
// (private to the verify stage): the observed days per state and the
// observed dominant state of a window, and the climatological probability
// that each state dominates a window of D days, from the regime model's own
// record. The window products of the guidance (dominance, expected days) are
// scored against these (window_products.hpp).
#pragma once

#include <armadillo>
#include <cstddef>
#include <cstdint>
#include <vector>

#include "isohypse/numerics/regime_model.hpp"

namespace isohypse::verification {

// No single dominant state: two or more states share the most days.
inline constexpr int kTiedWindow = -1;

// The observed outcome of one window.
struct WindowOutcome {
  arma::vec days;             // observed days per state (n_states; sums to the window's length)
  int dominant = kTiedWindow; // the state observed on the most days, or kTiedWindow
};

// labels: the observed state (0..n_states-1) of every day of the window, in
// any order. A tie for the most days gives dominant = kTiedWindow: the
// window has no binary dominance outcome and is left out of the dominance
// scores (its days still count for the expected days). Throws InternalError
// for no day or a label outside 0..n_states-1.
WindowOutcome observed_window(const std::vector<int>& labels, std::size_t n_states);

// Climatological dominance probability of each state for a window of
// window_days days: over every run of window_days consecutive days
// (day_numbers[t + i] = day_numbers[t] + i) that are all in season, the
// fraction in which the state is the most frequent, a tie split equally
// among the tied states, as the guidance splits its members' ties
// (numerics/ensemble_stats.hpp window_summary). states: 0..n_states-1 per
// day. Sums to 1; NaN for every state when the record holds no such run.
// Throws InternalError when the three lists differ in length, for a state
// outside 0..n_states-1 or window_days < 1.
arma::vec climatological_dominance(const std::vector<std::int64_t>& day_numbers, const std::vector<int>& states,
                                   const std::vector<char>& in_season, std::size_t n_states, int window_days);

// The same over the model's record (its dates in the model's calendar, its
// in-season flags; a label -1 is the no-regime state k): k + 1 states.
arma::vec climatological_dominance(const RegimeModel& model, int window_days);

}  // namespace isohypse::verification
