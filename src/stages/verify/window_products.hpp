// Step "score the window products" of the post-mortem: the two products of
// every lead window the guidance states (its "windows" list) scored against
// what happened (private to the verify stage).
//   dominance     the probability that a state is the most frequent over the
//                 window: per state Brier score, its five-term binned
//                 decomposition (Stephenson, Coelho & Jolliffe 2008), ROC area
//                 (Mason & Graham 2002) and Brier skill against the
//                 climatological dominance probability; the multi-category
//                 Brier score and its skill with a moving-block interval
//                 (Kuensch 1989); a reliability diagram of all states pooled
//                 with consistency bars (Broecker & Smith 2007).
//   expected days the summed daily probabilities: mean absolute error against
//                 the observed days per state and over all states, and its
//                 skill 1 - MAE / MAE_clim against D x the climatological
//                 frequency, with a moving-block interval.
// Formulas: numerics/scores.hpp (Wilks 2011).
#pragma once

#include <nlohmann/json.hpp>
#include <vector>

#include "isohypse/numerics/regime_model.hpp"
#include "isohypse/stages/observed.hpp"
#include "isohypse/stages/verify.hpp"
#include "stages/verify/guidance_archive.hpp"
#include "stages/verify/verification_cases.hpp"

namespace isohypse::verification {

// {"windows": [...], "issues_without_windows": N, "definition": text}: one
// entry per distinct (first_lead_days, last_lead_days) of the guidance,
// ordered by them, for windows with at least one valid day in [config.from,
// config.to]. A window is scored only when every valid day lies in that
// period, in one of season_months (empty: any month) and is observed, and
// some member covers enough of the window (its dominance is not null); the
// others are counted under "left_out" by reason (partly_outside_period,
// outside_season, not_observed, no_member_covers). A scored window whose
// observed days tie for the most ("tied") is left out of the dominance
// scores only. Each entry: first_lead_days, last_lead_days, days, windows,
// cases, tied, left_out, climatology {dominance, expected_days},
// dominance {cases, multicategory_brier, multicategory_brier_climatology,
// multicategory_brier_skill (interval: estimate, lower, upper, block_days,
// blocks[, note]), regimes {state: brier, reliability, resolution,
// uncertainty, within_bin_variance, within_bin_covariance, base_rate,
// climatological_probability, brier_skill, roc_area}, reliability [bins]},
// expected_days {cases, mae, mae_climatology, skill (interval), regimes
// {state: mae, mae_climatology, skill, mean_expected_days,
// mean_observed_days, climatological_days}}. Scores that are undefined (no
// case, one class only) are null. observed: the labels (0..k, k = no
// regime) build_cases checked.
nlohmann::json score_window_products(const GuidanceSet& guidance, const ObservedSequence& observed,
                                     const RegimeModel& model, const StateClimatology& climatology,
                                     const VerifyConfig& config, const std::vector<int>& season_months);

// The windows of calibrated issues (those with raw products) that
// score_window_products scores, their raw products against their
// calibrated ones: one entry per (first_lead_days, last_lead_days) with at
// least one, ordered by them: first_lead_days, last_lead_days, cases, and
// for "raw" and "calibrated": dominance_cases (without the tied windows),
// dominance_multicategory_brier, dominance_multicategory_brier_skill
// (interval, as score_window_products'), dominance_reliability (the binned
// reliability term summed over the states), expected_days_mae and
// expected_days_skill (interval). Empty when no issue is calibrated.
nlohmann::json compare_window_products(const GuidanceSet& guidance, const ObservedSequence& observed,
                                       const RegimeModel& model, const StateClimatology& climatology,
                                       const VerifyConfig& config, const std::vector<int>& season_months);

}  // namespace isohypse::verification
