// Classify, step 6: write the document. The guidance JSON
// (config/guidance.schema.json, format version kGuidanceFormatVersion) from
// the steps before: the ensemble, the bias correction, daily probabilities,
// windows, persistence, the climatological transitions, the members (when
// asked for) and where it all came from.
#pragma once

#include <nlohmann/json.hpp>
#include <optional>

#include "isohypse/stages/classify.hpp"
#include "stages/classify/calibrated_guidance.hpp"
#include "stages/classify/lagged_ensemble.hpp"
#include "stages/classify/member_labels.hpp"
#include "stages/classify/model_climate.hpp"
#include "stages/classify/observed_regime.hpp"
#include "stages/classify/persistence_climatology.hpp"
#include "stages/classify/window_statistics.hpp"

namespace isohypse {

// What the document is made of (the results of the steps before).
struct GuidanceParts {
  const LaggedEnsemble& ensemble;
  const ModelClimate& climate;
  MemberLabels& labels;  // its member detail is moved into the document
  const WindowStatistics& statistics;
  const std::optional<ObservedRegime>& observed;
  const PersistenceClimatology& persistence;  // the climatological chances of lasting
  const std::optional<CalibratedGuidance>& calibrated;  // with --calibration
};

// provenance.created is the time of the call (UTC). Throws InternalError
// when the statistics do not have one entry per state of the model (a bug).
nlohmann::json guidance_document(const RegimeModel& model, const ClassifyConfig& cfg, const GuidanceParts& parts);

}  // namespace isohypse
