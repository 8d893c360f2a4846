// The settings of `isohypse derive`: one struct, read from the JSON config,
// overridden by flags, checked in one place (validate) before the stage runs.
#pragma once

#include <cstdint>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/base/field.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/climatology.hpp"
#include "isohypse/numerics/eof.hpp"

namespace isohypse {

// Every setting of `derive`, with its default. The JSON config uses the
// same names (see config/derive-example.json; every key is documented in
// the README); an unknown key is refused by name, listing the valid ones.
struct DeriveConfig {
  std::vector<std::string> inputs;          // files or globs
  std::string variable;                     // empty: automatic
  double level_hpa = 500.0;                 // pressure level, hPa
  std::optional<Domain> domain;             // empty: the whole grid of the files
  bool daily_mean = false;                  // average sub-daily steps
  std::vector<int> months = {11, 12, 1, 2, 3};
  ClimatologyOptions climatology;           // harmonics 3, no detrending
  int running_mean_days = 0;                // low-pass filter; 0 or 1 = none
  // Fewest EOFs explaining >= 80 %. Its `seed` is not a setting: the stage
  // gives the randomized method `seed` below.
  EofOptions eof;
  std::optional<int> k;                     // empty: automatic from the classifiability table
  int k_min = 2, k_max = 8;
  int restarts = 100;                       // k-means++ restarts of the final partition
  int classifiability_runs = 30;            // partitions per k for the index (>= 3)
  // Red-noise surrogates per k (at most: a k that can no longer pass stops
  // early). With k automatic at least minimum_surrogates(k range,
  // significance): 69 for k = 2..8 at 0.9.
  int surrogates = 100;
  // 1 - the family-wise error rate of the test over all k (Holm's
  // correction): on red noise some k passes with probability <= 0.1.
  double significance = 0.9;
  // Stop drawing surrogates for a k once it cannot pass (the verdicts are
  // those of the full test); false draws them all for every k.
  bool stop_early = true;
  // "No regime" below this area-weighted anomaly correlation of the day's
  // full field with its nearest regime's pattern (NoRegimeRule::FullField,
  // regime_model.hpp). 0.25 stays the default with the full-field rule
  // (issue 11; bench/README.md, "no-regime rule (issue 11)"): on the planted
  // demo world (k = 4) it flags 2.5 % of in-season days (1.3 % with the
  // former EOF-space rule), agreement with the planted labels 90.8 % (was
  // 91.6 %), labelled days right 93.2 % (was 92.8 %); on a noise-only world
  // it flags 11.3 % (was 7.0 %). 0.20 would flag fewer noise days than
  // before, 0.30 costs more agreement (89.7 %).
  double no_regime_threshold = 0.25;
  std::vector<std::string> names;           // optional regime names, in the model's order
  // The one seed of every random choice: k-means restarts, the
  // classifiability partitions and surrogates, the randomized EOFs.
  std::uint64_t seed = kDefaultSeed;
  int threads = 0;                          // 0 = all cores

  // Parses a config document; `source` names it in messages. Throws
  // InputError for an unknown key or a value of the wrong type.
  static DeriveConfig from_json(const nlohmann::json& j, const std::string& source);
  nlohmann::json to_json() const;
  // Checks ranges and consistency, the one place that does; throws
  // InputError naming the setting (and its flag, where there is one).
  void validate() const;
};

}  // namespace isohypse
