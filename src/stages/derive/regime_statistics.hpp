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
// days, n_points x k. labels: per day of the record, 0..k-1 or -1 for no
// regime (model.labels); days out of season and no-regime days are in no
// composite. A regime without a day gets a zero pattern (and a warning).
// Throws InternalError when labels and the record disagree in length or a
// label is outside -1..k-1.
arma::mat regime_patterns(const Field& anomalies, const Season& season, const std::vector<int>& labels, int k);

// Labels every day of the record with the model's RegimeLabeller
// (labeller.hpp; the one of classify and verify): model.weights, minus
// model.eof_mean, onto model.eofs, the nearest of model.centroids, no regime
// below model.no_regime_threshold by model.no_regime_rule. Sets
// model.labels (-1 = no regime) and model.correlation. Throws
// InternalError when the weights do not match the grid.
void label_days(const Field& anomalies, RegimeModel& model);

// Persistence and transitions over the season's days (no regime is state k)
// from model.labels: sets model.transition, model.transition_counts and
// model.regimes (ids R1.., names from `names` or describe_pattern of
// model.patterns, frequencies, runs, residence times). A regime's
// frequency, runs and residence count only its own days: a no-regime day
// ends a run. Throws InternalError
// when model.labels does not cover the record's days.
void regime_statistics(const Season& season, const std::vector<std::string>& names, RegimeModel& model);

}  // namespace isohypse::derive_steps
