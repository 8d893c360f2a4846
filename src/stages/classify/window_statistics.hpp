// Classify, step 4: compute the window statistics. From the members' daily
// regimes: the regime probabilities of each valid day, the summary of each
// lead window (expected days, dominance, transitions), and persistence (how
// old the current regime is, and the chance that the spell under way at the
// issue date lasts; its climatology is persistence_climatology's).
#pragma once

#include <armadillo>
#include <vector>

#include "isohypse/numerics/ensemble_stats.hpp"
#include "isohypse/stages/classify.hpp"

namespace isohypse {

struct WindowStatistics {
  int n_states = 0;      // the model's regimes and no regime
  int last_offset = 0;   // the last day any member reaches, days after the issue date
  std::vector<DayProbabilities> daily;        // days 0..last_offset that a member covers
  std::vector<WindowSummary> windows;         // cfg.windows starting by last_offset, cut at it
  std::vector<AgeDistribution> current_age;   // days 0..last_offset that a member covers
  LastingProbability lasting;                 // the spell under way at the issue date; 3, 5 and 7 days
};

// Throws InternalError from ensemble_stats when a track is invalid;
// InternalError when the model's transition matrix does not have n_states
// rows (a bug).
WindowStatistics window_statistics(const RegimeModel& model, const ClassifyConfig& cfg,
                                   const std::vector<MemberTrack>& tracks);

}  // namespace isohypse
