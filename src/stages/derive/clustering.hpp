// Derive, step "k-means": the final partition of the season's days into k
// regimes in EOF space.
#pragma once

#include <armadillo>
#include <vector>

#include "isohypse/numerics/kmeans.hpp"
#include "isohypse/numerics/regime_significance.hpp"
#include "isohypse/stages/derive.hpp"

namespace isohypse::derive_steps {

// The partition's settings from the config: k, restarts, seed, threads.
KMeansOptions kmeans_options(const DeriveConfig& cfg, int k);

// k-means of the season's PCs (n_days x n_eof; clustered as n_eof x n_days
// points). Clusters ordered by decreasing size (kmeans). Throws what kmeans
// throws.
KMeansResult cluster_days(const arma::mat& pcs, int k, const DeriveConfig& cfg);

// How closely the kept partition (the least inertia of cfg.restarts full
// k-means runs) matches the partition of the classifiability runs that
// agrees best with the others (Michelangeli et al. 1995's choice, the
// table's best_run at this k): min(A(kept, best), A(best, kept)), A the
// partition similarity of classifiability.hpp; 1 when every regime of one
// has an identical centroid in the other. NaN when the table has no row
// for k (a configured k outside k_min..k_max).
double agreement_with_runs(const KMeansResult& km, const std::vector<RegimeCountRow>& table);

}  // namespace isohypse::derive_steps
