// The regime model: everything the later stages need, in one self-describing
// file. Written by `derive`, read by `classify`, `verify` and `serve`.
//
// File format (format_version 1): NetCDF-4 (HDF5 underneath; h5py and xarray
// open it), documented in the README ("The regime model file"). Dimensions
// lat, lon, point, coef, eof, regime, state (regime + no regime), day, k_row.
// Written to a temporary file and renamed.
#pragma once

#include <armadillo>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "isohypse/calendar.hpp"
#include "isohypse/climatology.hpp"
#include "isohypse/field.hpp"

namespace isohypse {

inline constexpr int kRegimeModelFormatVersion = 1;

struct RegimeInfo {
  std::string id;            // "R1", "R2", ... in the model's order (decreasing frequency)
  std::string name;          // descriptive, e.g. "ridge 55N 140W +190 m" (or from the config)
  double frequency = 0;      // fraction of in-season days of the record
  double mean_run = 0, median_run = 0;
  int longest_run = 0, episodes = 0;  // episodes: runs of at least 5 days
  double residence_days = 0; // 1/(1 - p_ii)
};

struct RegimeCountEntry {
  int k = 0;
  double index = 0, surrogate_level = 0;
  bool significant = false;
};

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
  std::vector<RegimeCountEntry> k_table;
  bool k_automatic = false;
  // The observed sequence: every day of the record.
  std::vector<Date> dates;
  std::vector<int> labels;           // 0..k-1, or -1 for no regime
  std::vector<char> in_season;
  arma::vec correlation;             // with the nearest centroid
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

// Writes atomically (temporary file, then rename). Throws InputError naming
// the path when it cannot be written.
void write_regime_model(const RegimeModel& model, const std::string& path);
// Reads and checks the format version (a different one is refused, naming
// both). Throws InputError (missing) or DataError (not a regime model).
RegimeModel read_regime_model(const std::string& path);
// True when `path` opens as NetCDF and carries isohypse_format_version (of
// any version): a regime model rather than a height file. Never throws.
bool is_regime_model(const std::string& path);

// Per day: the nearest centroid (squared distance in component space) and the
// uncentred anomaly correlation with it; labels -1 where the correlation is
// below the threshold. pcs: n_days x n_eof.
void assign_regimes(const arma::mat& pcs, const arma::mat& centroids, double threshold, std::vector<int>& labels,
                    arma::vec& correlation);

// "ridge 55N 140W +190 m" (+ "/ trough 40N 100W -120 m" when a centre of the
// other sign reaches half the strongest one's size).
std::string describe_pattern(const arma::vec& pattern_m, const Grid& grid);

// SHA-256 of a file, hex (identifies a regime model in guidance provenance).
std::string sha256_file(const std::string& path);

}  // namespace isohypse
