// The post-mortem: a season of regime guidance against what happened.
//   check the config | load guidance (same regime model) | observed labels
//   (files or the model's record) | build cases (issue date, lead,
//   probabilities, observed) | score by lead | score by window, with
//   bootstrap intervals | frequency bias by month | find episodes (caught,
//   missed) | find false alarms | report JSON [| HTML: render/report_page.hpp]
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
  // Bins of fixed width 1 / reliability_bins over [0, 1] for the Brier
  // decomposition (five terms, Stephenson et al. 2008) and the reliability
  // diagram with its consistency bars (Broecker & Smith 2007).
  int reliability_bins = 10;
  std::uint64_t seed = kDefaultSeed;

  // Throws InputError naming the setting (and its flag) for no guidance
  // path, from after to, fewer than 10 bootstrap resamples, no windows or a
  // window that is not FIRST-LAST with 0 <= FIRST <= LAST, a confidence
  // outside (0, 1), min_episode_days below 1, or reliability_bins below 2
  // (--bins).
  void validate() const;
};

// Validates the config first (VerifyConfig::validate). Throws InputError for
// an empty archive, guidance from another regime model (naming the file and
// both model hashes) or a period without observations; DataError naming the
// file for guidance that is not valid JSON, not isohypse guidance, or lacks
// a required key or holds a value of the wrong type; InternalError for a
// broken precondition between its own steps (a bug).
nlohmann::json verify_guidance(const RegimeModel& model, const VerifyConfig& config);

}  // namespace isohypse
