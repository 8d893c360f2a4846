// The offline stage: reanalysis heights in, a regime model out.
//   read | climatology | anomalies [| detrend] [| running mean] | season |
//   sqrt(cos lat) weights | EOFs | classifiability table (choose k) |
//   k-means | patterns and names | daily labels | persistence and transitions
// Each step's published source is in the README ("How regimes are derived").
#pragma once

#include <functional>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/numerics/climatology.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/eof.hpp"
#include "isohypse/base/field.hpp"
#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

// Every setting of `derive`, with its default. The JSON config uses the
// same names (see config/derive-example.json; every key is documented in
// the README); an unknown key is refused by name, listing the valid ones.
struct DeriveConfig {
  std::vector<std::string> inputs;          // files or globs
  std::string variable;                     // empty: automatic
  double level_hpa = 500.0;
  std::optional<Domain> domain;             // empty: the whole grid of the files
  bool daily_mean = false;                  // average sub-daily steps
  std::vector<int> months = {11, 12, 1, 2, 3};
  ClimatologyOptions climatology;           // harmonics 3, no detrending
  int running_mean_days = 0;                // low-pass filter; 0 or 1 = none
  EofOptions eof;                           // fewest EOFs explaining >= 80 %
  std::optional<int> k;                     // empty: automatic from the classifiability table
  int k_min = 2, k_max = 8;
  int restarts = 100;                       // k-means++ restarts of the final partition
  int classifiability_runs = 30;            // partitions per k for the index
  int surrogates = 30;                      // red-noise surrogates per k
  double significance = 0.9;                // surrogate quantile to beat
  double no_regime_threshold = 0.25;        // anomaly correlation with the nearest centroid
  std::vector<std::string> names;           // optional regime names, in the model's order
  std::uint64_t seed = kDefaultSeed;
  int threads = 0;                          // 0 = all cores

  // Parses a config document; `source` names it in messages.
  static DeriveConfig from_json(const nlohmann::json& j, const std::string& source);
  nlohmann::json to_json() const;
  // Checks ranges and consistency; throws InputError naming the setting.
  void validate() const;
};

// stage: a short name ("read", "eof", "classifiability", ...); done/total
// count units of work within the stage (total 0 when not countable).
using DeriveProgress = std::function<void(const std::string& stage, int done, int total)>;

// Runs the whole stage. Throws InputError / DataError / NumericalError.
RegimeModel derive_regimes(const DeriveConfig& config, const DeriveProgress& progress = {});

// The summary printed after derive (and by --summary FILE as JSON).
nlohmann::json model_summary(const RegimeModel& model);
std::string summary_text(const RegimeModel& model);

}  // namespace isohypse
