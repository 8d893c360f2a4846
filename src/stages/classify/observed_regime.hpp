// Classify, step 5: the latest observed regime and how long it has lasted,
// from the analysis files when given, else from the regime model's own
// record when that reaches the issue date.
#pragma once

#include <optional>
#include <string>

#include "isohypse/base/calendar.hpp"
#include "isohypse/stages/classify.hpp"

namespace isohypse {

struct ObservedRegime {
  int state = 0;        // index into model_states (k = no regime)
  int age_days = 0;     // length of the run of that state ending at as_of
  Date as_of;           // the last observed day on or before the issue date
  std::string source;   // "analysis files" or "regime model record"
};

// Days after the issue date are left out. Without analysis files the model's
// record counts only when it reaches the issue date or the day before;
// nullopt when there is nothing to report. Throws like observed_from_files.
std::optional<ObservedRegime> latest_observed_regime(const RegimeModel& model, const ClassifyConfig& cfg,
                                                     const Date& issue);

}  // namespace isohypse
