#include "stages/derive/regime_statistics.hpp"

#include <algorithm>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/eof.hpp"
#include "isohypse/numerics/regime_sequence.hpp"

namespace isohypse::derive_steps {

arma::mat regime_patterns(const Field& anomalies, const Season& season, const std::vector<int>& labels, int k) {
  // The partition comes from the same season's PCs: a mismatch is a bug.
  if (labels.size() != season.size())
    throw InternalError("regime patterns: " + std::to_string(labels.size()) + " labels for " +
                        std::to_string(season.size()) + " season days");
  for (int l : labels)
    if (l < 0 || l >= k) throw InternalError("regime patterns: label " + std::to_string(l) + " outside 0.." +
                                             std::to_string(k - 1));
  arma::mat patterns(anomalies.grid.n_points(), k, arma::fill::zeros);
  arma::vec counts(k, arma::fill::zeros);
  for (std::size_t i = 0; i < season.size(); ++i) {
    const int l = labels[i];
    patterns.col(l) += arma::conv_to<arma::vec>::from(anomalies.values.col(season.days[i]));
    counts(l) += 1;
  }
  for (int j = 0; j < k; ++j) patterns.col(j) /= std::max(1.0, counts(j));
  return patterns;
}

void label_days(const Field& anomalies, const arma::vec& weights, RegimeModel& model) {
  if (weights.n_elem != anomalies.n_points())
    throw InternalError("daily labels: " + std::to_string(weights.n_elem) + " weights for " +
                        std::to_string(anomalies.n_points()) + " grid points");
  constexpr arma::uword kBlock = 2048;  // days per projection
  const arma::fvec wf = arma::conv_to<arma::fvec>::from(weights);
  const arma::uword n = anomalies.n_times();
  arma::mat pcs(n, model.eofs.n_cols);
  for (arma::uword t0 = 0; t0 < n; t0 += kBlock) {
    const arma::uword t1 = std::min<arma::uword>(n, t0 + kBlock) - 1;
    arma::fmat part = anomalies.values.cols(t0, t1);
    part.each_col() %= wf;
    pcs.rows(t0, t1) = project_onto_eofs(part, model.eof_mean, model.eofs);
  }
  assign_regimes(pcs, model.centroids, model.no_regime_threshold, model.labels, model.correlation);
}

void regime_statistics(const Season& season, const std::vector<std::string>& names, RegimeModel& model) {
  const int k = model.k();
  if (model.labels.size() != season.in_season.size())
    throw InternalError("regime statistics: " + std::to_string(model.labels.size()) + " labels for " +
                        std::to_string(season.in_season.size()) + " days of the record");
  std::vector<int> season_labels;
  for (auto t : season.days) season_labels.push_back(model.labels[t] < 0 ? k : model.labels[t]);
  const SequenceStats st = sequence_stats(season_labels, season.next, k + 1, 5);
  model.transition = st.transition;
  model.transition_counts = st.counts;
  model.regimes.clear();
  for (int j = 0; j < k; ++j) {
    RegimeInfo r;
    r.id = "R";  // appended, not "R" + ...: GCC 12 warns falsely (-Wrestrict) on that
    r.id += std::to_string(j + 1);
    r.name = names.empty() ? describe_pattern(model.patterns.col(j), model.grid) : names[j];
    r.frequency = st.frequency(j);
    r.mean_run = st.runs[j].mean;
    r.median_run = st.runs[j].median;
    r.longest_run = st.runs[j].longest;
    r.episodes = st.runs[j].episodes;
    r.residence_days = st.residence_days(j);
    model.regimes.push_back(r);
  }
}

}  // namespace isohypse::derive_steps
