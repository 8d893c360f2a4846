#include "stages/verify/block_interval.hpp"

#include "isohypse/base/vocabulary.hpp"

namespace isohypse::verification {

nlohmann::json block_interval_json(const std::vector<std::int64_t>& issue_day, int block_days,
                                   const std::function<double(const std::vector<std::size_t>&)>& statistic,
                                   const VerifyConfig& config, StatisticRange range) {
  const BlockInterval ci = moving_block_bootstrap(issue_day, block_days, statistic, config.bootstrap_resamples,
                                                  config.confidence, config.seed, range);
  nlohmann::json out{{"estimate", number_or_null(ci.interval.estimate)},
                     {"lower", number_or_null(ci.interval.lower)},
                     {"upper", number_or_null(ci.interval.upper)},
                     {"block_days", ci.block_days},
                     {"blocks", ci.blocks}};
  if (!ci.note.empty()) out["note"] = ci.note;
  return out;
}

}  // namespace isohypse::verification
