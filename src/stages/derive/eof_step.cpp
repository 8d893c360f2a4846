#include "stages/derive/eof_step.hpp"

#include <spdlog/spdlog.h>

namespace isohypse::derive_steps {

EofOptions eof_options(const DeriveConfig& cfg) {
  EofOptions opt = cfg.eof;
  opt.seed = cfg.seed;
  return opt;
}

EofResult season_eofs(const Field& anomalies, const Season& season, const arma::vec& weights,
                      const DeriveConfig& cfg) {
  const arma::fvec wf = arma::conv_to<arma::fvec>::from(weights);
  arma::fmat X = anomalies.values.cols(arma::uvec(season.days));
  X.each_col() %= wf;
  EofResult eof = compute_eofs(X, season.next, eof_options(cfg));
  spdlog::info("{} EOFs explain {:.1f}% of the weighted variance ({} method)", eof.eofs.n_cols,
               100 * arma::accu(eof.explained), eof.method);
  return eof;
}

}  // namespace isohypse::derive_steps
