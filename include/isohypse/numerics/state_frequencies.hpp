// The regime model's labelled record as the climatological reference of
// calibration: the frequency of each state by calendar month, and what a
// window of D days holds climatologically (the probability that each state
// dominates it, the expected days of each state) for windows centred in a
// month. States are the model's regimes 0..k-1, then no regime (k); a
// record label -1 counts as no regime. Months are those of the record's
// dates (the model's calendar).
#pragma once

#include <armadillo>
#include <array>
#include <cstddef>

#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

struct MonthlyStateFrequencies {
  // frequency[m - 1]: k + 1 values summing to 1 over the in-season record
  // days of month m; for a month outside the season, over every record day
  // of that month; NaN for every state when the record has no day in m.
  std::array<arma::vec, 12> frequency;
  std::array<std::size_t, 12> days{};  // the record days behind each month
  std::array<bool, 12> in_season{};    // the month is one of the model's season

  // frequency[month - 1]; throws InternalError for a month outside 1..12.
  const arma::vec& of(int month) const;
};

// Throws DataError naming model.path when its dates and labels differ in
// number or a label lies outside -1..k-1.
MonthlyStateFrequencies monthly_state_frequencies(const RegimeModel& model);

// What climatology expects of a window of window_days days.
struct WindowClimatology {
  // Over every run of window_days consecutive in-season record days whose
  // middle day (the (D+1)/2-th) falls in the month: the fraction of runs in
  // which each state is the most frequent (a tie split equally among the
  // tied states, as the guidance splits its members' ties), and the mean
  // number of days in each state.
  arma::vec dominance, expected_days;
  std::size_t runs = 0;      // runs counted
  bool whole_season = false; // the month had no such run: every in-season run counted instead
};

// NaN values when the record holds no run of that length in season at all.
// Throws InternalError for window_days < 1 or a month outside 1..12.
WindowClimatology window_climatology(const RegimeModel& model, int window_days, int month);

}  // namespace isohypse
