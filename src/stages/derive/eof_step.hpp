// Derive, step "EOFs": the EOFs of the season's area-weighted anomalies.
#pragma once

#include <armadillo>

#include "isohypse/base/field.hpp"
#include "isohypse/numerics/eof.hpp"
#include "isohypse/stages/derive.hpp"
#include "stages/derive/season.hpp"

namespace isohypse::derive_steps {

// The EOF settings of the config, with the config's one seed for the
// randomized method (cfg.eof.seed is not a setting and is overwritten).
EofOptions eof_options(const DeriveConfig& cfg);

// EOFs of the season's days of `anomalies` (metres) times `weights`
// (sqrt(cos lat) per point, Grid::sqrt_cos_weights), with the season's
// consecutive days for the PCs' autocorrelation. Logs the variance
// explained. Throws what compute_eofs throws.
EofResult season_eofs(const Field& anomalies, const Season& season, const arma::vec& weights,
                      const DeriveConfig& cfg);

}  // namespace isohypse::derive_steps
