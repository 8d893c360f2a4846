// Derive, step "climatology and anomalies": the record's mean annual cycle
// (and trend, if asked) fitted and removed, missing values set to the
// climatology, then the optional running mean.
#pragma once

#include <cstddef>

#include "isohypse/base/field.hpp"
#include "isohypse/numerics/climatology.hpp"
#include "isohypse/stages/derive.hpp"

namespace isohypse::derive_steps {

// Turns `field` (heights, metres) into anomalies in place, in metres; NaN
// values (missing_values of them, as the reader counted) become 0, i.e. the
// climatology. Returns the fitted climatology. Throws what
// fit_climatology throws.
Climatology make_anomalies(Field& field, const DeriveConfig& cfg, std::size_t missing_values);

}  // namespace isohypse::derive_steps
