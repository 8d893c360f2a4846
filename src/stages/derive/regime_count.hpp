// Derive, step "the number of regimes": the classifiability table over
// k_min..k_max against red-noise surrogates, and the k used (configured, or
// chosen from the table).
#pragma once

#include <cstddef>
#include <vector>

#include "isohypse/numerics/classifiability.hpp"
#include "isohypse/numerics/eof.hpp"
#include "isohypse/stages/derive.hpp"
#include "stages/derive/season.hpp"

namespace isohypse::derive_steps {

struct RegimeCount {
  std::vector<RegimeCountRow> table;
  int k = 0;
};

// The table's settings from the config: its seed, threads, runs and
// surrogates; k_max at most season_days - 1.
RegimeCountOptions regime_count_options(const DeriveConfig& cfg, std::size_t season_days);

// The table for the season's PCs (eof.pcs, n_days x n_eof), reporting
// "classifiability" progress, and k: cfg.k when set, else
// choose_regime_count. Throws InputError when a configured k exceeds half the
// season's days or when cfg.names does not give one name per regime.
RegimeCount count_regimes(const EofResult& eof, const Season& season, const DeriveConfig& cfg,
                          const DeriveProgress& progress);

}  // namespace isohypse::derive_steps
