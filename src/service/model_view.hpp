// The regime model as the service shows it, built once when the service
// starts: the /api/v1/model document (format "isohypse-model-summary":
// regimes with their colour, map link and pattern in metres on the model's
// grid, transitions, the regime-count table, the palette and the caution)
// and one SVG map per regime, all on one colour scale so that maps compare.
#pragma once

#include <map>
#include <string>

#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

class ModelView {
public:
  // `land_mask` is the coastline file ("" draws none); a mask that cannot
  // be read only loses the coastlines, with a warning in the log.
  ModelView(const RegimeModel& model, const std::string& land_mask);

  // The /api/v1/model document as JSON text.
  const std::string& model_json() const { return model_json_; }
  // The map of regime `id` ("R1", ...), or nullptr when the model has no
  // such regime.
  const std::string* map_svg(const std::string& id) const;

private:
  std::string model_json_;
  std::map<std::string, std::string> maps_;  // regime id -> SVG
};

}  // namespace isohypse
