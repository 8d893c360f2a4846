// The guidance in a few lines for the terminal.
#pragma once

#include <nlohmann/json.hpp>
#include <string>

namespace isohypse {

// The issue date and the ensemble, whether bias correction was applied, the
// observed regime, the regime most likely to dominate each window with its
// probability, and the caution. `guidance` is a document from
// classify_forecasts.
std::string guidance_text(const nlohmann::json& guidance);

}  // namespace isohypse
