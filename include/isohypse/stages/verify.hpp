// The post-mortem: a season of regime guidance against what happened.
//   load guidance (same regime model) | observed labels (files or the
//   model's record) | cases (issue date, lead, probabilities, observed) |
//   scores by lead and window with bootstrap intervals | frequency bias |
//   episodes caught, missed, false alarms | report JSON [| HTML]
// Scores follow Wilks (2011), Statistical Methods in the Atmospheric
// Sciences, 3rd ed.; see scores.hpp for each formula's source.
#pragma once

#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

struct VerifyConfig {
  std::vector<std::string> guidance;   // JSON files, folders (every *.json inside) or globs
  std::vector<std::string> observed;   // analysis/reanalysis files; empty: the model's own record
  std::string variable;
  std::optional<Date> from, to;        // valid dates (real calendar)
  std::vector<LeadWindow> windows = default_windows();
  int bootstrap_resamples = 1000;
  double confidence = 0.9;
  int min_episode_days = 5;
  std::uint64_t seed = kDefaultSeed;
};

// Throws InputError for an empty archive, guidance from another regime
// model (naming the file and both model hashes) or a period without
// observations.
nlohmann::json verify_guidance(const RegimeModel& model, const VerifyConfig& config);


}  // namespace isohypse
