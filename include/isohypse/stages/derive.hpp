// The offline stage: reanalysis heights in, a regime model out.
//   read | climatology | anomalies [| detrend] [| running mean] | season |
//   sqrt(cos lat) weights | EOFs | classifiability table (choose k) |
//   k-means | patterns and names | daily labels | persistence and transitions
// Each step's published source is in the README ("How regimes are derived");
// each is a function of its own in src/stages/derive/.
#pragma once

#include <functional>
#include <string>

#include "isohypse/numerics/regime_model.hpp"
#include "isohypse/stages/derive_config.hpp"
#include "isohypse/stages/derive_summary.hpp"  // model_summary, summary_text: what derive prints

namespace isohypse {

// stage: a short name ("read", "climatology", "eof", "classifiability",
// "kmeans", "labels"); done/total count units of work within the stage
// (total 0 when not countable).
using DeriveProgress = std::function<void(const std::string& stage, int done, int total)>;

// Runs the whole stage with `config` (validated first; the one seed reaches
// k-means, the classifiability partitions and surrogates and the randomized
// EOFs). The model's provenance holds the per-stage timings (timings_s).
// Throws InputError (settings, files), DataError (file contents),
// NumericalError (too few season days, EOF failures).
RegimeModel derive_regimes(const DeriveConfig& config, const DeriveProgress& progress = {});

}  // namespace isohypse
