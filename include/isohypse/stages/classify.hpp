// The daily stage: lagged-ensemble forecasts in, regime guidance out.
//   scan forecasts (metadata) | choose the lagged ensemble | [model climate
//   from reforecasts by lead] | read members | regrid | anomalies | [running
//   mean] | sqrt(cos lat) weights | project on the EOFs | nearest centroid
//   with the no-regime threshold | probabilities, windows, persistence,
//   transitions | guidance JSON (config/guidance.schema.json) [| CSV]
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

inline constexpr int kGuidanceFormatVersion = 2;  // 2: transition matrices carry their states and counts

struct ClassifyConfig {
  std::vector<std::string> forecasts;     // files or globs (all are scanned; only the chosen are read)
  std::vector<std::string> reforecasts;   // empty: no bias correction
  std::vector<std::string> analysis;      // optional: the latest observed regime and its age
  std::string variable;                   // empty: automatic
  int lag = 0;                            // latest N initialisations up to the issue date; 0 = all given
  Weighting weights;                      // equal | linear | exp:DAYS
  std::optional<Date> issue_date;         // real calendar; default: the latest initialisation
  bool member_detail = false;             // member-level assignments in the output
  std::vector<LeadWindow> windows = default_windows();
  int reforecast_window_days = 7;         // reforecasts initialised within +-N days of the year
  int lead_smoothing_days = 5;            // running mean of the model climate along lead
  int threads = 0;                        // members read and labelled at once; 0 = every core
};

// Where classify's time went, in seconds of wall time (for --timings and the
// benchmark). Members are read and labelled on several threads at once, so
// read_s, unpack_s and label_s are sums over the threads within
// members_wall_s.
struct ClassifyTimings {
  double scan_s = 0;          // metadata of every forecast and reforecast file
  double reference_s = 0;     // climatology, or the model climate from reforecasts (read here)
  double read_s = 0;          // forecast members: netCDF-C reads (one thread at a time)
  double unpack_s = 0;        // ... unpacked to metres, daily means, regridded
  double label_s = 0;         // anomalies, projection, labels (and --members detail)
  double members_wall_s = 0;  // the three above, on `threads` threads
  int threads = 0;
  double statistics_s = 0;    // probabilities, windows, persistence, transitions, observed regime
  double document_s = 0;      // the JSON document
  double total_s = 0;
};

using ClassifyProgress = std::function<void(const std::string& stage, int done, int total)>;

// Runs the stage; returns the guidance document. Throws InputError /
// DataError naming the file and the problem.
nlohmann::json classify_forecasts(const RegimeModel& model, const ClassifyConfig& config,
                                  const ClassifyProgress& progress = {}, ClassifyTimings* timings = nullptr);

// For impact models: DIR/daily.csv and DIR/windows.csv (atomically).
void write_guidance_csv(const nlohmann::json& guidance, const std::string& dir);

// A few lines for the terminal: the most likely regime by window, with
// probabilities, and whether bias correction was applied.
std::string guidance_text(const nlohmann::json& guidance);

}  // namespace isohypse
