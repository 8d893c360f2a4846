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
// effective N), regime_count_table (k_table_json), regime_count_reason, k,
// k_automatic, regimes (regime_json), no_regime_frequency (of in-season
// days), no_regime_threshold, no_regime_correlation (the rule's name,
// regime_model.hpp), transitions
// (transition_json over model_states) and provenance.
nlohmann::json model_summary(const RegimeModel& model);
// The same as text tables for a terminal.
std::string summary_text(const RegimeModel& model);

// The table for choosing k as text, a line per k: the index and its spread,
// the surrogates' level, the variance ratio, the surrogates drawn, the two
// p-values (">=" when a k stopped early), Holm's level and the verdict;
// k_used (0: none) is marked.
std::string regime_count_text(const std::vector<RegimeCountRow>& table, int k_used);

}  // namespace isohypse
