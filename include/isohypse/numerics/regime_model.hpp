// The regime model in memory: the climatology, EOFs, centroids, patterns and
// statistics that derive finds and the later stages use, with regime
// assignment and pattern names. Its file is io/regime_model_file.hpp.
#pragma once

#include <armadillo>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/numerics/climatology.hpp"
#include "isohypse/base/field.hpp"
#include "isohypse/numerics/regime_significance.hpp"

namespace isohypse {

// Version 2: the no-regime correlation is taken over the full field (see
// NoRegimeRule); version 1 models, read as before, keep the EOF-space rule.
inline constexpr int kRegimeModelFormatVersion = 2;

// How the correlation that decides "no regime" is computed. Both use the
// nearest centroid c in component space and the day's weighted, centred
// field y = w x - m (w = sqrt(cos lat), m the EOF mean) with components
// pc = E^T y:
//   FullField: (pc . c) / (|y| |c|), the area-weighted uncentred anomaly
//     correlation of the day's field with the regime's pattern E c over the
//     whole grid (E orthonormal: y . E c = pc . c and |E c| = |c|).
//   EofSpace:  (pc . c) / (|pc| |c|), the same within the truncated EOF
//     space; larger by |y| / |pc| (the variance the EOFs leave out is
//     ignored). The rule of format version 1 models.
enum class NoRegimeRule { FullField, EofSpace };

// The rule's name in the model file's global attribute
// no_regime_correlation: "full_field_area_weighted" or "eof_space".
const char* no_regime_rule_name(NoRegimeRule rule);
// The rule of a name; std::nullopt for any other text.
std::optional<NoRegimeRule> no_regime_rule_from_name(const std::string& name);

struct RegimeInfo {
  std::string id;            // "R1", "R2", ... in the model's order (decreasing frequency)
  std::string name;          // descriptive, e.g. "ridge 55N 140W +190 m" (or from the config)
  double frequency = 0;      // fraction of in-season days of the record
  double mean_run = 0, median_run = 0;
  int longest_run = 0, episodes = 0;  // episodes: runs of at least 5 days
  double residence_days = 0; // 1/(1 - p_ii)
};

// A row of the table for choosing k (regime_significance.hpp).
using RegimeCountEntry = RegimeCountRow;

struct RegimeModel {
  int format_version = kRegimeModelFormatVersion;
  Domain domain;
  Grid grid;
  std::string variable;
  Calendar calendar = Calendar::Standard;
  std::vector<int> months;           // the season
  Climatology climatology;
  int running_mean_days = 0;
  arma::vec weights;                 // sqrt(cos lat) per point
  arma::vec eof_mean;                // weighted-space mean removed before the EOFs
  arma::mat eofs;                    // n_points x n_eof
  arma::vec eigenvalues, explained, north_error, effective_n;
  double total_variance = 0;
  arma::mat centroids;               // n_eof x k
  arma::mat patterns;                // n_points x k, metres (composites of member days)
  std::vector<RegimeInfo> regimes;
  double no_regime_threshold = 0.25; // anomaly correlation with the nearest centroid
  NoRegimeRule no_regime_rule = NoRegimeRule::FullField;  // EofSpace when read from a version 1 file
  std::vector<RegimeCountEntry> k_table;
  bool k_automatic = false;
  std::string k_reason;              // why this k, in words (choose_regime_count; empty in older models)
  // The kept partition against the classifiability runs' most agreeing one
  // (derive's agreement_with_runs); NaN when unknown.
  double partition_agreement = arma::datum::nan;
  // The observed sequence: every day of the record.
  std::vector<Date> dates;
  std::vector<int> labels;           // 0..k-1, or -1 for no regime
  std::vector<char> in_season;
  arma::vec correlation;             // with the nearest centroid, by no_regime_rule
  arma::mat transition;              // (k+1) x (k+1), state k = no regime, in-season days
  arma::umat transition_counts;
  double inertia = 0;
  nlohmann::json config;             // the full derive configuration
  nlohmann::json provenance;         // inputs with sizes, tool version, seed, date, timings
  // Filled in when read: where from and the file's SHA-256.
  std::string path, sha256;

  int k() const { return static_cast<int>(centroids.n_cols); }
  int n_eof() const { return static_cast<int>(eofs.n_cols); }
  int no_regime_state() const { return k(); }
};

// Per day: the nearest of model.centroids (squared distance in component
// space) and the uncentred anomaly correlation with it by
// model.no_regime_rule; labels -1 where the correlation is below
// model.no_regime_threshold. pcs: n_days x n_eof, the components of the
// weighted, centred fields y; field_norms: |y| per day (the weighted
// full-field norm, metres), used by NoRegimeRule::FullField and ignored
// (may be empty) by EofSpace. A day with a zero norm gets correlation 0.
// The one assignment of derive, classify and verify (via labeller.hpp).
// Throws InternalError when the sizes disagree.
void assign_regimes(const RegimeModel& model, const arma::mat& pcs, const arma::vec& field_norms,
                    std::vector<int>& labels, arma::vec& correlation);

// The JSON of a regime, the same in the model file, the derive summary and
// the service's API: id, name, frequency, mean_run_days, median_run_days,
// longest_run_days, episodes_5_days_or_more, residence_days (null when
// infinite). regime_from_json also reads models written before the keys were
// unified (mean_run, median_run, longest_run, episodes). Throws
// nlohmann::json::exception on a missing key.
nlohmann::json regime_json(const RegimeInfo& regime);
RegimeInfo regime_from_json(const nlohmann::json& j);

// The JSON of the table for choosing k, a row per k: k, classifiability,
// classifiability_spread, variance_ratio, surrogates (the number drawn),
// surrogate_level, surrogate_classifiability and surrogate_variance_ratio
// (one value per surrogate, in float precision), p_classifiability,
// p_variance_ratio, gap, gap_spread, stopped_early, holm_level, significant.
// k_table_from_json also reads the rows of older models (k, classifiability
// or index, surrogate_level, significant; the rest NaN or empty).
nlohmann::json k_table_json(const std::vector<RegimeCountEntry>& table);
std::vector<RegimeCountEntry> k_table_from_json(const nlohmann::json& j);

// The JSON of a transition matrix between states (rows: from, columns: to):
// {"states": [...], "probabilities": [[...]], "counts": [[...]]}, NaN as
// null; counts left out when empty.
nlohmann::json transition_json(const std::vector<std::string>& states, const arma::mat& probabilities,
                               const arma::mat& counts = arma::mat());

// The model's list of states: regime ids in the model's order, then the
// no-regime state (base/vocabulary.hpp).
std::vector<std::string> model_states(const RegimeModel& model);

// A matrix as JSON rows, NaN as null.
nlohmann::json matrix_json(const arma::mat& m);

// "ridge 55N 140W +190 m" (+ "/ trough 40N 100W -120 m" when a centre of the
// other sign reaches half the strongest one's size).
std::string describe_pattern(const arma::vec& pattern_m, const Grid& grid);

}  // namespace isohypse
