// Derive, step "the number of regimes": the classifiability table over
// k_min..k_max against red-noise surrogates, and the k used (configured, or
// chosen from the table).
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "isohypse/numerics/regime_significance.hpp"
#include "isohypse/numerics/eof.hpp"
#include "isohypse/stages/derive.hpp"
#include "stages/derive/season.hpp"

namespace isohypse::derive_steps {

struct RegimeCount {
  std::vector<RegimeCountRow> table;
  int k = 0;
  std::string reason;  // why this k, in words
};

// The table's settings from the config: its seed, threads, runs and
// surrogates; k_max at most season_days - 1.
RegimeCountOptions regime_count_options(const DeriveConfig& cfg, std::size_t season_days);

// The table for the season's PCs (eof.pcs, n_days x n_eof), reporting
// "classifiability" progress, and k: cfg.k when set (warning when the
// surrogates are too few for the test), else choose_regime_count. Throws
// InputError when a configured k exceeds half the season's days or when
// cfg.names does not give one name per regime, and NumericalError, with the
// table, when k is automatic and no k passes.
RegimeCount count_regimes(const EofResult& eof, const Season& season, const DeriveConfig& cfg,
                          const DeriveProgress& progress);

}  // namespace isohypse::derive_steps
