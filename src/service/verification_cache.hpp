// GET /api/v1/verification: the archive's guidance for a range of issue
// dates verified against the observed files (verify_guidance with the
// service's verify_options), kept per range and archive generation so that
// a page reloaded many times verifies once. An archive that cannot be
// verified (no observations for its valid dates, guidance of another
// model) is answered with the status of its error (http_errors.hpp), and
// that answer is kept too.
#pragma once

#include <map>
#include <mutex>
#include <string>

#include "isohypse/numerics/regime_model.hpp"
#include "isohypse/service/archive.hpp"
#include "isohypse/service/service_config.hpp"
#include "service/http_errors.hpp"

namespace isohypse {

class VerificationCache {
public:
  // Keeps references; they must outlive the cache. `netcdf` is the
  // service's netCDF mutex (observed files are netCDF).
  VerificationCache(const ServiceConfig& config, const RegimeModel& model, const GuidanceArchive& archive,
                    std::mutex& netcdf);

  // The report for issue dates in [from, to] (YYYY-MM-DD, "" open) of
  // archive generation `generation`. Throws HttpError 404 when the archive
  // holds no guidance in the range. Thread-safe.
  HttpAnswer answer(const std::string& from, const std::string& to, unsigned generation);

private:
  HttpAnswer verify(const std::vector<std::string>& dates);

  const ServiceConfig& config_;
  const RegimeModel& model_;
  const GuidanceArchive& archive_;
  std::mutex& netcdf_;
  std::mutex mutex_;
  std::map<std::string, HttpAnswer> answers_;  // "from|to|generation" -> answer
};

}  // namespace isohypse
