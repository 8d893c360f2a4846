// Step "build cases" of the post-mortem: every day of guidance paired with
// the regime observed on its valid date (private to the verify stage).
#pragma once

#include <armadillo>
#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "isohypse/numerics/regime_model.hpp"
#include "isohypse/stages/observed.hpp"
#include "isohypse/stages/verify.hpp"
#include "stages/verify/guidance_archive.hpp"
#include "stages/verify/state_climatology.hpp"

namespace isohypse::verification {

// Observed state (0..k, k = no regime) by valid day number (real calendar).
using ObservedDays = std::map<std::int64_t, int>;

// One forecast-observation pair: a day of one issue's guidance.
struct Case {
  int issue = 0;           // index of the issue in the GuidanceSet
  int lead = 0;            // days
  std::int64_t valid = 0;  // day number, real calendar
  int month = 0;           // month of the valid date, 1..12
  arma::vec p;             // probability of each state
  int most_likely = 0;
  int observed = 0;
  std::int64_t issue_day = 0;  // day number of the issue date, real calendar (the bootstrap's blocks)
  // A calibrated issue's raw probabilities and their most likely state
  // (DailyGuidance::raw_p, raw_most_likely); empty and -1 otherwise. p and
  // most_likely are always the issue's headline.
  arma::vec raw_p;
  int raw_most_likely = -1;
};

// Every pair, and the period they cover.
struct Cases {
  std::vector<Case> list;       // by issue, then in the order of the issue's daily entries
  int max_lead = 0;             // days
  std::int64_t first_valid = 0; // day numbers of the first and last valid date of a case
  std::int64_t last_valid = 0;
  ObservedDays observed;        // the observed days from first_valid to last_valid
  // Days of guidance valid in the period and observed, but outside the
  // model's season, counted by month of the valid date: not scored, or with
  // --all-months (VerifyConfig::all_months) scored and in `list`.
  std::map<int, std::size_t> out_of_season;
  int lag_span_days = 1;        // the longest lag span of the issues (GuidanceIssue::lag_span_days)
};

// Indices into cases.list of the cases for which keep(case) holds, in order.
template <class Keep>
std::vector<std::size_t> cases_where(const Cases& cases, Keep keep) {
  std::vector<std::size_t> idx;
  for (std::size_t i = 0; i < cases.list.size(); ++i)
    if (keep(cases.list[i])) idx.push_back(i);
  return idx;
}

// Pairs every daily entry of the guidance whose valid date lies in
// [config.from, config.to] (either may be absent) and in one of
// season_months (empty: any month; with config.all_months every month is
// kept) with the observed state of that day; days without an observation are
// left out, observed days outside the season counted in out_of_season.
// Throws InputError when
// no pair remains, saying which side is empty: "no guidance valid between A
// and B (the guidance covers C to D)", "no observations between A and B
// ... (observations from S cover E to F)" or that every observed day lies
// outside the season; InternalError
// for an observed label outside 0..n_states-1 or guidance whose probability
// vectors are not n_states long.
Cases build_cases(const GuidanceSet& guidance, const ObservedSequence& observed, std::size_t n_states,
                  const VerifyConfig& config, const std::vector<int>& season_months = {});

}  // namespace isohypse::verification
