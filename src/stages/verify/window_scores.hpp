// Step "score by window" of the post-mortem: the scores of every lead window,
// with block-bootstrap intervals over issue dates (private to the verify stage).
#pragma once

#include <nlohmann/json.hpp>

#include "isohypse/stages/verify.hpp"
#include "stages/verify/verification_cases.hpp"

namespace isohypse::verification {

// One entry per window of config.windows that has cases, in their order:
// cases, hit rate, Heidke and multi-category Brier skill each with its
// interval, the multi-category Brier score, per-state scores, the
// reliability diagram and the frequency bias.
nlohmann::json scores_by_window(const Cases& cases, const StateClimatology& climatology, const VerifyConfig& config);

}  // namespace isohypse::verification
