// Step "score by lead" of the post-mortem: the headline and per-state scores
// of every lead day (private to the verify stage).
#pragma once

#include <nlohmann/json.hpp>

#include "isohypse/stages/verify.hpp"
#include "stages/verify/verification_cases.hpp"

namespace isohypse::verification {

// One entry per lead (days, ascending) that has cases: cases, hit rate,
// Heidke, multi-category Brier score and its skill (with its bootstrap
// interval), and per-state scores.
nlohmann::json scores_by_lead(const Cases& cases, const StateClimatology& climatology, const VerifyConfig& config);

}  // namespace isohypse::verification
