#include "isohypse/stages/classify.hpp"

#include <chrono>
#include <optional>
#include <string>

#include "base/blas_threads.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/stopwatch.hpp"
#include "stages/classify/calibrated_guidance.hpp"
#include "stages/classify/guidance_document.hpp"
#include "stages/classify/lagged_ensemble.hpp"
#include "stages/classify/member_labels.hpp"
#include "stages/classify/model_climate.hpp"
#include "stages/classify/observed_regime.hpp"
#include "stages/classify/persistence_climatology.hpp"
#include "stages/classify/window_statistics.hpp"

namespace isohypse {

void ClassifyConfig::validate() const {
  auto bad = [](const std::string& m) { throw InputError(m); };
  if (forecasts.empty()) bad("forecasts (--forecasts): no forecast files given");
  if (lag < 0) bad("lag (--lag) must be 0 (all) or positive; found " + std::to_string(lag));
  if (reforecast_window_days < 0 || reforecast_window_days > 60)
    bad("reforecast_window_days (--reforecast-window) must lie in 0..60 days; found " +
        std::to_string(reforecast_window_days));
  if (lead_smoothing_days < 0 || lead_smoothing_days > 15)
    bad("lead_smoothing_days (--lead-smoothing) must lie in 0..15 days; found " +
        std::to_string(lead_smoothing_days));
  if (threads < 0) bad("threads (--threads) must be 0 (every core) or positive; found " + std::to_string(threads));
  if (windows.empty()) bad("windows (--windows): no lead windows given");
  for (const auto& [first, last] : windows)
    if (first < 0 || last < first)
      bad("windows (--windows): " + std::to_string(first) + "-" + std::to_string(last) +
          " is not a lead range FIRST-LAST with 0 <= FIRST <= LAST");
}

nlohmann::json classify_forecasts(const RegimeModel& model, const ClassifyConfig& cfg,
                                  const ClassifyProgress& progress, ClassifyTimings* timings) {
  cfg.validate();
  // Every BLAS call here is small (the climatology of 46 days, one member's
  // projection): one BLAS thread, or its idle pool would spin on the cores
  // that the reading and labelling threads need.
  const detail::ScopedBlasThreads one_blas_thread(1);
  const ClassifyProgress report = progress ? progress : [](const std::string&, int, int) {};
  ClassifyTimings unused;
  ClassifyTimings& time = timings ? *timings : unused;
  Stopwatch clock;

  // A calibration for another model is refused before any forecast is read.
  std::optional<Calibration> calibration;
  if (!cfg.calibration.empty()) calibration = load_calibration(model, cfg.calibration);
  const LaggedEnsemble ensemble = choose_lagged_ensemble(model, cfg, report);
  const std::vector<Initialisation> reforecasts = scan_reforecasts(model, cfg, ensemble, report);
  time.scan_s = clock.lap();
  time.initialisations = static_cast<int>(ensemble.chosen.size());
  for (const Initialisation* in : ensemble.chosen) time.grib_initialisations += in->grib != nullptr;

  const ModelClimate climate = build_model_climate(model, cfg, ensemble, reforecasts, report);
  time.reference_s = clock.lap();

  MemberLabels labels = label_members(model, cfg, ensemble, climate, report);
  time.members_wall_s = clock.lap();
  time.threads = labels.times.threads;
  time.read_s = labels.times.read_s;
  time.unpack_s = labels.times.unpack_s;
  time.label_s = labels.times.label_s;

  report("statistics", 0, 0);
  const WindowStatistics statistics = window_statistics(model, cfg, labels.tracks);
  const std::optional<ObservedRegime> observed = latest_observed_regime(model, cfg, ensemble.issue);
  const PersistenceClimatology persistence = persistence_climatology(model, observed, ensemble.issue);
  std::optional<CalibratedGuidance> calibrated;
  if (calibration) calibrated = calibrated_guidance(model, std::move(*calibration), ensemble, statistics);
  time.statistics_s = clock.lap();

  nlohmann::json guidance =
      guidance_document(model, cfg, {ensemble, climate, labels, statistics, observed, persistence, calibrated});
  time.document_s = clock.lap();
  time.total_s = clock.total();
  return guidance;
}

}  // namespace isohypse
