// The observed regime sequence: labels of analysed or reanalysed days with
// the regime model's own preprocessing (its climatology, running mean,
// weights, EOFs, centroids and no-regime threshold).
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

struct ObservedSequence {
  std::vector<Date> dates;   // real (proleptic Gregorian) calendar, ascending
  std::vector<int> labels;   // 0..k-1, k = no regime
  std::string source;        // "analysis files" or "regime model record"
};

// From height files (analysis or reanalysis; any grid covering the model's
// domain, interpolated bilinearly when it differs). Days outside [from, to]
// (real calendar, either may be empty) are left out. Throws like the reader.
ObservedSequence observed_from_files(const RegimeModel& model, const std::vector<std::string>& paths,
                                     const std::string& variable, const std::optional<Date>& from = std::nullopt,
                                     const std::optional<Date>& to = std::nullopt);

// The labels stored in the model (every day of its record).
ObservedSequence observed_from_model(const RegimeModel& model);

// Labels (state k = no regime) of height anomalies (n_points x n_days on the
// model grid), with the model's weights, EOFs, centroids and threshold (see
// labeller.hpp; use a RegimeLabeller to label many fields).
std::vector<int> label_anomalies(const RegimeModel& model, const arma::fmat& anomalies,
                                 arma::vec* correlation = nullptr);

}  // namespace isohypse
