#include "isohypse/stages/derive.hpp"

#include <spdlog/spdlog.h>

#include <chrono>
#include <cmath>

#include "isohypse/base/stopwatch.hpp"
#include "stages/derive/anomalies.hpp"
#include "stages/derive/clustering.hpp"
#include "stages/derive/eof_step.hpp"
#include "stages/derive/provenance.hpp"
#include "stages/derive/record.hpp"
#include "stages/derive/regime_count.hpp"
#include "stages/derive/regime_statistics.hpp"
#include "stages/derive/season.hpp"

namespace isohypse {

namespace {

using namespace derive_steps;

// The wall time of each stage, in seconds to the millisecond, for
// provenance.timings_s (and the debug log).
class StageClock {
public:
  void lap(const char* stage) {
    const double s = watch_.lap();
    timings_[stage] = std::round(s * 1000) / 1000;
    spdlog::debug("stage {} took {:.3f} s", stage, s);
  }
  const nlohmann::json& timings() const { return timings_; }

private:
  Stopwatch watch_;
  nlohmann::json timings_;
};

// The model's description of the data and its EOFs and centroids; the
// patterns, labels and statistics come after.
RegimeModel model_from(const Record& rec, Climatology clim, const arma::vec& weights, const EofResult& eof,
                       const RegimeCount& count, const KMeansResult& km, const DeriveConfig& cfg) {
  const Grid& g = rec.field.grid;
  RegimeModel m;
  m.domain = cfg.domain.value_or(Domain{g.lat.min(), g.lat.max(), g.lon(0), g.lon(g.n_lon() - 1)});
  m.grid = g;
  m.variable = rec.field.variable;
  m.calendar = rec.report.calendar;
  m.months = cfg.months;
  m.climatology = std::move(clim);
  m.running_mean_days = cfg.running_mean_days;
  m.weights = weights;
  m.eof_mean = eof.mean;
  m.eofs = eof.eofs;
  m.eigenvalues = eof.eigenvalues;
  m.explained = eof.explained;
  m.north_error = eof.north_error;
  m.effective_n = eof.effective_n;
  m.total_variance = eof.total_variance;
  m.centroids = km.centroids;
  m.inertia = km.inertia;
  m.no_regime_threshold = cfg.no_regime_threshold;
  m.k_automatic = !cfg.k;
  m.k_table = count.table;
  m.k_reason = count.reason;
  m.dates = rec.field.dates;
  m.config = cfg.to_json();
  return m;
}

}  // namespace

RegimeModel derive_regimes(const DeriveConfig& cfg, const DeriveProgress& progress) {
  cfg.validate();
  auto starting = [&](const char* stage) {
    if (progress) progress(stage, 0, 0);
  };
  StageClock clock;
  Record rec = read_record(cfg, progress);
  clock.lap("read");

  starting("climatology");
  Field& anomalies = rec.field;
  Climatology clim = make_anomalies(anomalies, cfg, rec.report.missing_values);
  clock.lap("climatology");

  const Season season = select_season(anomalies.dates, cfg.months);
  const arma::vec weights = anomalies.grid.sqrt_cos_weights();
  starting("eof");
  const EofResult eof = season_eofs(anomalies, season, weights, cfg);
  clock.lap("eof");

  const RegimeCount count = count_regimes(eof, season, cfg, progress);
  clock.lap("classifiability");

  starting("kmeans");
  const KMeansResult km = cluster_days(eof.pcs, count.k, cfg);
  clock.lap("kmeans");

  RegimeModel m = model_from(rec, std::move(clim), weights, eof, count, km, cfg);
  m.partition_agreement = agreement_with_runs(km, count.table);
  starting("labels");
  label_days(anomalies, m);
  m.patterns = regime_patterns(anomalies, season, m.labels, count.k);
  m.in_season = season.in_season;
  regime_statistics(season, cfg.names, m);
  clock.lap("labels");

  m.provenance = derive_provenance(rec, season, eof, km, cfg, clock.timings());
  return m;
}

}  // namespace isohypse
