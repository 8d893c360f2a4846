// The daily stage: lagged-ensemble forecasts in, regime guidance out. Its
// steps (src/stages/classify/, one file each):
//   choose the lagged ensemble (scan the forecasts' metadata) | build the
//   model climate from reforecasts by lead (or the model's climatology) |
//   label the members (read, regrid, anomalies, running mean, project on the
//   EOFs, nearest centroid with the no-regime threshold) | compute the window
//   statistics (probabilities, windows, persistence, transitions) | the
//   latest observed regime | write the document (the guidance JSON,
//   config/guidance.schema.json). The CSV (guidance_csv.hpp) and the terminal
//   summary (guidance_text.hpp) are made from that document.
#pragma once

#include <functional>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/ensemble_stats.hpp"
#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

// 2: transition matrices carry their states and counts; 3: window dominance counts members covering 80 % of the
// window (members, member_weight, initialisations, min_coverage) and persistence.lasting is the spell under way at
// the issue date beside the record's climatology and the Markov p_ii^n; 4: with --calibration, raw and calibrated
// probabilities side by side (raw_probabilities, calibrated_probabilities; raw_/calibrated_ dominance and expected
// days), the headline ones under the former keys, and a "calibration" object saying which the headline uses.
inline constexpr int kGuidanceFormatVersion = 4;

struct ClassifyConfig {
  std::vector<std::string> forecasts;     // files or globs (all are scanned; only the chosen are read)
  std::vector<std::string> reforecasts;   // empty: no bias correction
  std::vector<std::string> analysis;      // optional: the latest observed regime and its age
  std::string calibration;                // optional: a calibration file (isohypse calibrate); headline calibrated
  std::string variable;                   // empty: automatic
  int lag = 0;                            // latest N initialisations up to the issue date; 0 = all given
  Weighting weights;                      // equal | linear | exp:DAYS
  std::optional<Date> issue_date;         // real calendar; default: the latest initialisation
  bool member_detail = false;             // member-level assignments in the output
  std::vector<LeadWindow> windows = default_windows();
  int reforecast_window_days = 7;         // reforecasts initialised within +-N days of the year
  int lead_smoothing_days = 5;            // running mean of the model climate along lead
  int threads = 0;                        // members read and labelled at once; 0 = every core

  // Checks every setting: at least one forecast path; lag >= 0; reforecast
  // window 0..60 days; lead smoothing 0..15 days; threads >= 0; at least one
  // window, each 0 <= first <= last. Throws InputError naming the setting
  // (its field and its command-line flag) and the value found.
  void validate() const;
};

// Where classify's time went, in seconds of wall time (for --timings and the
// benchmark). Members are read and labelled on several threads at once, so
// read_s, unpack_s and label_s are sums over the threads within
// members_wall_s.
struct ClassifyTimings {
  double scan_s = 0;          // metadata of every forecast and reforecast file
  double reference_s = 0;     // climatology, or the model climate from reforecasts (read here)
  double read_s = 0;          // forecast members: netCDF-C reads (one thread at a time), GRIB decoding (any thread)
  int grib_initialisations = 0;  // of the chosen initialisations, those read from GRIB
  int initialisations = 0;       // chosen initialisations
  double unpack_s = 0;        // ... unpacked to metres, daily means, regridded
  double label_s = 0;         // anomalies, projection, labels (and --members detail)
  double members_wall_s = 0;  // the three above, on `threads` threads
  int threads = 0;
  double statistics_s = 0;    // probabilities, windows, persistence, transitions, observed regime
  double document_s = 0;      // the JSON document
  double total_s = 0;
};

using ClassifyProgress = std::function<void(const std::string& stage, int done, int total)>;

// Runs the stage; returns the guidance document. Calls config.validate()
// first, so a bad setting is refused before any file is touched. Throws
// InputError / DataError naming the file (or setting) and the problem;
// InternalError when two of its own steps disagree (a bug). progress, if
// set, is called from the calling thread; timings, if given, is filled in.
nlohmann::json classify_forecasts(const RegimeModel& model, const ClassifyConfig& config,
                                  const ClassifyProgress& progress = {}, ClassifyTimings* timings = nullptr);

}  // namespace isohypse
