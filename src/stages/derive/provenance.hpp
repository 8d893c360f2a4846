// Derive, step "provenance": where a model came from, stored in the model
// and printed in the summary.
#pragma once

#include <nlohmann/json.hpp>

#include "isohypse/numerics/eof.hpp"
#include "isohypse/numerics/kmeans.hpp"
#include "isohypse/stages/derive.hpp"
#include "stages/derive/record.hpp"
#include "stages/derive/season.hpp"

namespace isohypse::derive_steps {

// tool, version, created (UTC now), inputs (absolute paths and sizes in
// bytes, 0 when unreadable), record (first and last day, days, season days,
// missing days and values), seed, eof_method, kmeans (restarts, best
// restart, iterations, inertia) and timings_s (seconds per stage).
nlohmann::json derive_provenance(const Record& record, const Season& season, const EofResult& eof,
                                 const KMeansResult& km, const DeriveConfig& cfg, const nlohmann::json& timings);

}  // namespace isohypse::derive_steps
