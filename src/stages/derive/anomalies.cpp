#include "stages/derive/anomalies.hpp"

#include <malloc.h>
#include <spdlog/spdlog.h>

namespace isohypse::derive_steps {

Climatology make_anomalies(Field& field, const DeriveConfig& cfg, std::size_t missing_values) {
  Climatology clim = fit_climatology(field, cfg.climatology);
  subtract_climatology(field, clim);
  if (missing_values) {
    field.values.replace(arma::datum::nan, 0.0f);
    spdlog::warn("{} missing values ({:.2g}% of the record) set to the climatology", missing_values,
                 100.0 * double(missing_values) / double(field.values.n_elem));
  }
  running_mean(field.values, field.dates, cfg.running_mean_days);
  malloc_trim(0);  // the climatology's work blocks go back to the system too
  return clim;
}

}  // namespace isohypse::derive_steps
