// Step "raw against calibrated" of the post-mortem: where the archive holds
// calibrated guidance (format version 4, "calibration.applied"), the raw and
// the calibrated probabilities of the same cases scored side by side
// (private to the verify stage). The report's other scores stay those of
// each issue's headline probabilities.
#pragma once

#include <nlohmann/json.hpp>

#include "isohypse/stages/verify.hpp"
#include "stages/verify/guidance_archive.hpp"
#include "stages/verify/verification_cases.hpp"

namespace isohypse::verification {

// The cases of calibrated issues only (those with raw probabilities), each
// with its raw probabilities and raw most likely state as p and most_likely
// (raw true) or with its headline, the calibrated ones (raw false); the
// rest of Cases as given.
Cases calibrated_issue_cases(const Cases& cases, bool raw);

// Null when no issue of the archive is calibrated; else {"issues":
// {"calibrated", "raw"} (issues of the archive), "headline" (what the
// report's other scores use), "windows": [...], "window_products": [...]}.
// Each entry of "windows" (one per window of config.windows with cases of
// calibrated issues): first_lead_days, last_lead_days, cases, and for "raw"
// and "calibrated": hit_rate (of the most likely state), multicategory_brier,
// multicategory_brier_skill (block-bootstrap interval as the report's skills:
// estimate, lower, upper, block_days, blocks[, note]) and reliability (the
// binned reliability term of the Brier decomposition summed over the states,
// config.reliability_bins bins); "skill_difference": calibrated minus raw
// multi-category Brier skill with its interval from the same blocks.
// window_products: the entries of compare_window_products (window_products.hpp).
nlohmann::json raw_versus_calibrated(const GuidanceSet& guidance, const Cases& cases,
                                     const StateClimatology& climatology, const VerifyConfig& config,
                                     const nlohmann::json& window_products);

}  // namespace isohypse::verification
