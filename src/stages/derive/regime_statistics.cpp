#include "stages/derive/regime_statistics.hpp"

#include <spdlog/spdlog.h>

#include <algorithm>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/labeller.hpp"
#include "isohypse/numerics/regime_sequence.hpp"

namespace isohypse::derive_steps {

arma::mat regime_patterns(const Field& anomalies, const Season& season, const std::vector<int>& labels, int k) {
  // The labels come from the same record: a mismatch is a bug.
  if (labels.size() != season.in_season.size())
    throw InternalError("regime patterns: " + std::to_string(labels.size()) + " labels for " +
                        std::to_string(season.in_season.size()) + " days of the record");
  arma::mat patterns(anomalies.grid.n_points(), k, arma::fill::zeros);
  arma::vec counts(k, arma::fill::zeros);
  for (const arma::uword t : season.days) {
    const int l = labels[t];
    if (l < -1 || l >= k)
      throw InternalError("regime patterns: label " + std::to_string(l) + " outside -1.." + std::to_string(k - 1));
    if (l < 0) continue;  // no regime: in no regime's composite
    patterns.col(l) += arma::conv_to<arma::vec>::from(anomalies.values.col(t));
    counts(l) += 1;
  }
  for (int j = 0; j < k; ++j) {
    if (counts(j) == 0) spdlog::warn("regime {} has no day above the no-regime threshold: its pattern is zero", j + 1);
    patterns.col(j) /= std::max(1.0, counts(j));
  }
  return patterns;
}

void label_days(const Field& anomalies, RegimeModel& model) {
  if (model.weights.n_elem != anomalies.n_points())
    throw InternalError("daily labels: " + std::to_string(model.weights.n_elem) + " weights for " +
                        std::to_string(anomalies.n_points()) + " grid points");
  // The labeller of classify and verify: the three stages label a field
  // identically, by the model's own no-regime rule.
  RegimeLabeller labeller(model);
  model.labels = labeller.label(anomalies.values, &model.correlation);
  for (int& l : model.labels)
    if (l == model.k()) l = -1;
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
