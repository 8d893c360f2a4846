// The reference forecast of the post-mortem's skill scores and catch rule:
// the climatological frequency of each state, of the model's season by
// default, or, with --all-months (VerifyConfig::all_months), of the calendar
// month of each case's valid date, counted over the model's whole record
// (private to the verify stage).
#pragma once

#include <armadillo>
#include <array>
#include <cstddef>
#include <string>
#include <vector>

#include "isohypse/numerics/regime_model.hpp"

namespace isohypse::verification {

struct Cases;

// The states verified and their climatological frequencies.
struct StateClimatology {
  std::vector<std::string> states;  // the model's regime ids, then the no-regime state
  // Per state, over the model's season; the no-regime share is what the
  // regimes leave (at least 0). The reference in the default mode.
  arma::vec frequency;
  // With --all-months, else empty: monthly[m - 1] is the frequency of each
  // state over every day of calendar month m in the model's record, in season
  // or not (labels -1 count as the no-regime state); NaN for a month without
  // a record day. monthly_days[m - 1]: the record days of month m.
  std::vector<arma::vec> monthly;
  std::array<std::size_t, 12> monthly_days{};

  bool by_month() const { return !monthly.empty(); }
  // The reference forecast of a case valid in `month` (1..12): monthly[month - 1]
  // with --all-months, else the season's frequency. Throws InternalError for a
  // month outside 1..12 in the monthly mode.
  const arma::vec& reference(int month) const;
};

// The season's frequencies from the model's regimes (RegimeInfo::frequency),
// and with all_months the monthly table from model.dates and model.labels
// (month of the model's calendar). Throws DataError naming model.path when the
// record's dates and labels differ in number or a label lies outside -1..k-1.
StateClimatology state_climatology(const RegimeModel& model, bool all_months = false);

// With --all-months: every case's valid month must have at least one record
// day. Throws InputError naming the month and model_file otherwise; does
// nothing in the default mode.
void require_reference_months(const StateClimatology& climatology, const Cases& cases, const std::string& model_file);

}  // namespace isohypse::verification
