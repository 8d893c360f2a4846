// The interval JSON of every verify score: a moving-block bootstrap over
// consecutive issue dates (numerics/block_bootstrap.hpp) turned into the
// report's {"estimate", "lower", "upper", "block_days", "blocks"[, "note"]}
// (private to the verify stage).
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <nlohmann/json.hpp>
#include <vector>

#include "isohypse/numerics/block_bootstrap.hpp"
#include "isohypse/stages/verify.hpp"

namespace isohypse::verification {

// The interval of a statistic of n cases. issue_day[j] is the issue day
// number of case j (j = 0 .. n-1); statistic gets positions 0 .. n-1 (a
// case drawn twice appears twice); block_days the block length in days;
// range the statistic's range, where the interval is clamped. Resamples,
// level and seed from config. Throws InputError as moving_block_bootstrap.
nlohmann::json block_interval_json(const std::vector<std::int64_t>& issue_day, int block_days,
                                   const std::function<double(const std::vector<std::size_t>&)>& statistic,
                                   const VerifyConfig& config, StatisticRange range);

}  // namespace isohypse::verification
