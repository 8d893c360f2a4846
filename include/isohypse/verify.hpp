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

#include "isohypse/calendar.hpp"
#include "isohypse/regime_model.hpp"

namespace isohypse {

struct VerifyConfig {
  std::vector<std::string> guidance;   // JSON files, folders (every *.json inside) or globs
  std::vector<std::string> observed;   // analysis/reanalysis files; empty: the model's own record
  std::string variable;
  std::optional<Date> from, to;        // valid dates (real calendar)
  std::vector<std::pair<int, int>> windows = {{1, 3}, {4, 7}, {8, 14}, {15, 28}, {29, 45}};
  int bootstrap_resamples = 1000;
  double confidence = 0.9;
  int min_episode_days = 5;
  std::uint64_t seed = 20261202;
};

// Throws InputError for an empty archive, guidance from another regime
// model (naming the file and both model hashes) or a period without
// observations.
nlohmann::json verify_guidance(const RegimeModel& model, const VerifyConfig& config);

// One self-contained HTML page (inline SVG, no scripts or network).
std::string verification_html(const nlohmann::json& report);

// The headline numbers for the terminal.
std::string verification_text(const nlohmann::json& report);

}  // namespace isohypse
