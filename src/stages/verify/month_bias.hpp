// The frequency bias of each calendar month of the verified period, leads of
// a day and more (private to the verify stage).
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "stages/verify/verification_cases.hpp"

namespace isohypse::verification {

// {"1": frequency bias per state (case_scores.hpp), ...}: one entry per
// month (1..12, the valid date's) that has cases of lead 1 day or more.
nlohmann::json frequency_bias_by_month(const Cases& cases, const std::vector<std::string>& states);

}  // namespace isohypse::verification
