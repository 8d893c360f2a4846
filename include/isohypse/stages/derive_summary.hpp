// The summary of a regime model that derive prints (and inspect, given a
// model): the record, the EOFs with their sampling errors, the table for
// choosing k, the regimes with their persistence, and the transitions.
#pragma once

#include <nlohmann/json.hpp>
#include <string>

#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

// As JSON (derive --summary FILE): format_version, domain, grid, season_months,
// record, eofs (eigenvalue, explained and cumulative fractions, North error,
// effective N), regime_count_table, k, k_automatic, regimes (regime_json),
// no_regime_frequency (of in-season days), no_regime_threshold,
// no_regime_correlation (the rule's name, regime_model.hpp), transitions
// (transition_json over model_states) and provenance.
nlohmann::json model_summary(const RegimeModel& model);
// The same as text tables for a terminal.
std::string summary_text(const RegimeModel& model);

}  // namespace isohypse
