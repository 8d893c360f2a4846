// Derive, step "k-means": the final partition of the season's days into k
// regimes in EOF space.
#pragma once

#include <armadillo>

#include "isohypse/numerics/kmeans.hpp"
#include "isohypse/stages/derive.hpp"

namespace isohypse::derive_steps {

// The partition's settings from the config: k, restarts, seed, threads.
KMeansOptions kmeans_options(const DeriveConfig& cfg, int k);

// k-means of the season's PCs (n_days x n_eof; clustered as n_eof x n_days
// points). Clusters ordered by decreasing size (kmeans). Throws what kmeans
// throws.
KMeansResult cluster_days(const arma::mat& pcs, int k, const DeriveConfig& cfg);

}  // namespace isohypse::derive_steps
