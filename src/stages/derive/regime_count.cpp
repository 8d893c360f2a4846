#include "stages/derive/regime_count.hpp"

#include <algorithm>
#include <string>

#include "isohypse/base/error.hpp"

namespace isohypse::derive_steps {

RegimeCountOptions regime_count_options(const DeriveConfig& cfg, std::size_t season_days) {
  RegimeCountOptions rco;
  rco.k_min = cfg.k_min;
  rco.k_max = std::min<int>(cfg.k_max, static_cast<int>(season_days) - 1);
  rco.runs = cfg.classifiability_runs;
  rco.surrogates = cfg.surrogates;
  rco.level = cfg.significance;
  rco.seed = cfg.seed;
  rco.threads = cfg.threads;
  return rco;
}

RegimeCount count_regimes(const EofResult& eof, const Season& season, const DeriveConfig& cfg,
                          const DeriveProgress& progress) {
  const std::size_t n = season.size();
  if (cfg.k && *cfg.k > static_cast<int>(n) / 2)
    throw InputError("k = " + std::to_string(*cfg.k) + " regimes is more than " + std::to_string(n) +
                     " in-season days allow (at most " + std::to_string(n / 2) + ")");
  RegimeCount rc;
  rc.table = regime_count_table(eof.pcs, season.next, regime_count_options(cfg, n), [&](int done, int total) {
    if (progress) progress("classifiability", done, total);
  });
  rc.k = cfg.k ? *cfg.k : choose_regime_count(rc.table);
  if (!cfg.names.empty() && static_cast<int>(cfg.names.size()) != rc.k)
    throw InputError("regimes.names has " + std::to_string(cfg.names.size()) + " names but " + std::to_string(rc.k) +
                     " regimes were found");
  return rc;
}

}  // namespace isohypse::derive_steps
