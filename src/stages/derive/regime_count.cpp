#include "stages/derive/regime_count.hpp"

#include <spdlog/spdlog.h>

#include <algorithm>
#include <string>

#include "isohypse/base/error.hpp"
#include "isohypse/stages/derive_summary.hpp"

namespace isohypse::derive_steps {

RegimeCountOptions regime_count_options(const DeriveConfig& cfg, std::size_t season_days) {
  RegimeCountOptions rco;
  rco.k_min = cfg.k_min;
  rco.k_max = std::min<int>(cfg.k_max, static_cast<int>(season_days) - 1);
  rco.runs = cfg.classifiability_runs;
  rco.surrogates = cfg.surrogates;
  rco.level = cfg.significance;
  rco.stop_early = cfg.stop_early;
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
  const RegimeCountOptions options = regime_count_options(cfg, n);
  const int needed = minimum_surrogates(options.k_max - options.k_min + 1, options.level);
  if (cfg.k && options.surrogates < needed)
    spdlog::warn("{} surrogates are too few for any k to pass the test at significance {} (at least {}): the "
                 "table is shown, k = {} as configured", options.surrogates, options.level, needed, *cfg.k);
  rc.table = regime_count_table(eof.pcs, season.next, options, [&](int done, int total) {
    if (progress) progress("classifiability", done, total);
  });
  const RegimeCountChoice choice = choose_regime_count(rc.table);
  if (cfg.k) {
    rc.k = *cfg.k;
    rc.reason = "k = " + std::to_string(rc.k) + " as configured; the table's verdict: " + choice.reason;
  } else if (choice.k == 0) {
    throw NumericalError("choosing the number of regimes (k = auto): " + choice.reason +
                         ". Set k to a number to derive regimes anyway. Table:\n" + regime_count_text(rc.table, 0));
  } else {
    rc.k = choice.k;
    rc.reason = choice.reason;
  }
  if (!cfg.names.empty() && static_cast<int>(cfg.names.size()) != rc.k)
    throw InputError("regimes.names has " + std::to_string(cfg.names.size()) + " names but " + std::to_string(rc.k) +
                     " regimes were found");
  return rc;
}

}  // namespace isohypse::derive_steps
