#include "stages/derive/clustering.hpp"

namespace isohypse::derive_steps {

KMeansOptions kmeans_options(const DeriveConfig& cfg, int k) {
  KMeansOptions ko;
  ko.k = k;
  ko.restarts = cfg.restarts;
  ko.seed = cfg.seed;
  ko.threads = cfg.threads;
  return ko;
}

KMeansResult cluster_days(const arma::mat& pcs, int k, const DeriveConfig& cfg) {
  return kmeans(pcs.t(), kmeans_options(cfg, k));
}

}  // namespace isohypse::derive_steps
