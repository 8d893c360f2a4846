// Step "write the report JSON" of the post-mortem: the report document
// (format "isohypse-verification", version 1) from what the other steps
// found (private to the verify stage).
#pragma once

#include <nlohmann/json.hpp>
#include <string>

#include "isohypse/numerics/regime_model.hpp"
#include "isohypse/stages/verify.hpp"
#include "stages/verify/episodes.hpp"
#include "stages/verify/false_alarms.hpp"
#include "stages/verify/guidance_archive.hpp"
#include "stages/verify/verification_cases.hpp"

namespace isohypse::verification {

// What the verification found, for the report.
struct Findings {
  nlohmann::json by_lead, windows, by_month;  // lead_scores.hpp, window_scores.hpp, month_bias.hpp
  nlohmann::json window_products;             // window_products.hpp
  nlohmann::json raw_versus_calibrated;       // raw_versus_calibrated.hpp; null: no calibrated issue
  Episodes episodes;
  FalseAlarms false_alarms;
};

// The report: period, states and regimes, climatology (the season's),
// guidance and observations used, the pairs outside the model's season and
// season_filter ("model season": not scored; "all months, monthly
// climatology": scored, with monthly_climatology, the reference of each
// valid month used), the scores, raw_versus_calibrated (only when an issue
// is calibrated), episodes, the observed sequence against the
// guidance's most likely states, the bootstrap settings and provenance
// (created now, UTC). observations_source: ObservedSequence::source.
nlohmann::json report_document(const RegimeModel& model, const VerifyConfig& config,
                               const StateClimatology& climatology, const GuidanceSet& guidance,
                               const std::string& observations_source, const Cases& cases, const Findings& found);

}  // namespace isohypse::verification
