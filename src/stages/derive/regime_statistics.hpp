// Derive, step "patterns, labels, statistics": what the model says about
// each regime once the partition is known.
#pragma once

#include <armadillo>
#include <string>
#include <vector>

#include "isohypse/base/field.hpp"
#include "isohypse/numerics/regime_model.hpp"
#include "stages/derive/season.hpp"

namespace isohypse::derive_steps {

// The regimes' patterns: the mean anomaly (metres) of each regime's season
// days, n_points x k. labels: the partition's label (0..k-1) per season day.
// Throws InternalError when labels and season disagree in length or a label
// is outside 0..k-1.
arma::mat regime_patterns(const Field& anomalies, const Season& season, const std::vector<int>& labels, int k);

// Labels every day of the record: projects the anomalies times `weights`
// onto model.eofs (after model.eof_mean), in blocks of days so the record is
// never copied whole, and assigns each to the nearest of model.centroids
// (no regime below model.no_regime_threshold). Sets model.labels and
// model.correlation. Throws InternalError when the weights do not match the
// grid.
void label_days(const Field& anomalies, const arma::vec& weights, RegimeModel& model);

// Persistence and transitions over the season's days (no regime is state k)
// from model.labels: sets model.transition, model.transition_counts and
// model.regimes (ids R1.., names from `names` or describe_pattern of
// model.patterns, frequencies, runs, residence times). Throws InternalError
// when model.labels does not cover the record's days.
void regime_statistics(const Season& season, const std::vector<std::string>& names, RegimeModel& model);

}  // namespace isohypse::derive_steps
