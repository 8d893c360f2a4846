// Step "load guidance" of the post-mortem: every guidance file of the
// archive read, checked against the regime model it is verified with, and
// parsed into what verification needs (private to the verify stage).
#pragma once

#include <armadillo>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/numerics/regime_model.hpp"

namespace isohypse::verification {

// One day of one issue's guidance.
struct DailyGuidance {
  Date valid;           // valid date, real (proleptic Gregorian) calendar
  int lead = 0;         // lead in days ("lead_days")
  arma::vec p;          // probability of each state in the model's order; a null probability reads as 0
  int most_likely = 0;  // index of the most likely state in the model's order
  // A calibrated issue's raw (uncalibrated) probabilities ("raw_probabilities",
  // guidance format version 4), null read as 0, and the first state of the
  // highest among them; empty and -1 for an issue without calibration.
  arma::vec raw_p;
  int raw_most_likely = -1;
};

// One lead window of one issue's guidance (the file's "windows" list).
struct WindowGuidance {
  int first_lead = 0, last_lead = 0;  // lead days, as the file states them ("first_lead_days", "last_lead_days")
  Date from, to;                      // first and last valid date, real calendar; to - from = last_lead - first_lead
  // Members counted for dominance: since issue 13 those covering at least
  // 80 % of the window's days (the file's min_coverage), before it every day.
  int members = 0;
  // Per state in the model's order: the probability that the state is the
  // most frequent over the window (members' ties split equally), each in
  // [0, 1]. Empty when the file gives null for every state (no member covers
  // enough of the window): the window cannot be scored.
  arma::vec dominance;
  arma::vec expected_days;            // per state: sum of the daily probabilities, days (>= 0); null reads as 0
  // A calibrated issue's raw products ("raw_dominance", "raw_expected_days"),
  // read as dominance and expected_days; both empty for an issue without
  // calibration, raw_dominance also when every state is null.
  arma::vec raw_dominance, raw_expected_days;
};

// One issue: a guidance file.
struct GuidanceIssue {
  std::string file;
  Date issue;                        // issue date, real calendar
  std::vector<DailyGuidance> daily;  // in the file's order
  // Days spanned by the lagged ensemble's initialisations (oldest to newest,
  // both counted: lag 3 of daily runs spans 3 days); 1 when the file does not
  // list its ensemble.
  int lag_span_days = 1;
  // In the file's order; empty when the file has no "windows" list (guidance
  // written by hand or by other tools: the window products are then not scored).
  std::vector<WindowGuidance> windows;
  // "calibration": {"applied": true} (format version 4): the headline
  // probabilities and products are the calibrated ones and the raw ones are
  // read beside them. False for an issue without calibration or written
  // before format version 4 (no "calibration" object).
  bool calibrated = false;
};

// The archive verified: one issue per file, in the order the files were named
// (a folder's *.json files sorted by name).
struct GuidanceSet {
  std::vector<GuidanceIssue> issues;
};

// The guidance files named by `paths`: files, folders (every *.json inside
// that is not hidden, sorted) or globs, in the order given.
std::vector<std::string> guidance_files(const std::vector<std::string>& paths);

// Reads and parses every guidance file. `states` are the model's states
// (model_states). Throws InputError for an empty archive, guidance from
// another regime model (naming the file and both model hashes) or with other
// states; DataError naming the file for a file that is not valid JSON ("not
// valid JSON at byte N"), not isohypse guidance, or lacks a required key or
// holds a value of the wrong type ("guidance has no 'daily' list", "daily[3]:
// probability of 'R1' is a string, not a number", "ensemble.initialisations[1]:
// age_days is a string, not a whole number", "windows[2]: dominance of 'R3' is
// 1.5, not a probability in 0..1", "windows[0]: from 2025-12-05 to 2025-12-08
// spans 4 days, not the 3 of lead days 1-3"). A "windows" list is optional.
// A calibrated issue ("calibration.applied" true) must give
// raw_probabilities in every daily entry and raw_dominance and
// raw_expected_days in every window ("daily[0] has no 'raw_probabilities'
// (its calibration is applied)"); "calibration" that is not an object, or
// whose "applied" is not a boolean, is a DataError too.
GuidanceSet load_guidance(const RegimeModel& model, const std::vector<std::string>& states,
                          const std::vector<std::string>& paths);

}  // namespace isohypse::verification
