#include "stages/derive/clustering.hpp"

#include <algorithm>

#include "isohypse/numerics/classifiability.hpp"

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

double agreement_with_runs(const KMeansResult& km, const std::vector<RegimeCountRow>& table) {
  for (const auto& row : table)
    if (row.k == static_cast<int>(km.centroids.n_cols) && !row.best_centroids.empty())
      return std::min(partition_similarity(km.centroids, row.best_centroids),
                      partition_similarity(row.best_centroids, km.centroids));
  return arma::datum::nan;
}

}  // namespace isohypse::derive_steps
