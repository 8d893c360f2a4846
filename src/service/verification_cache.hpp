// GET /api/v1/verification: the archive's guidance verified against the
// observed files (verify_guidance with the service's verify_options) for a
// range of VALID dates, as verify's --from/--to, optionally restricted to a
// range of issue dates; kept per ranges and archive generation so that
// a page reloaded many times verifies once. An archive that cannot be
// verified (no observations for its valid dates, guidance of another
// model) is answered with the status of its error (http_errors.hpp), and
// that answer is kept too. One verification runs at a time (a second waits
// its turn, a third is answered 503), and the service's netCDF lock is held
// only while it reads the observed files, so classification runs between.
#pragma once

#include <atomic>
#include <map>
#include <mutex>
#include <optional>
#include <string>

#include "isohypse/numerics/regime_model.hpp"
#include "isohypse/service/archive.hpp"
#include "isohypse/service/service_config.hpp"
#include "service/http_errors.hpp"

namespace isohypse {

// The dates asked for, YYYY-MM-DD or "" (open): valid dates (from, to) and
// issue dates (issued_from, issued_to); all_months: verify's --all-months
// (VerifyConfig::all_months).
struct VerificationRange {
  std::string from, to, issued_from, issued_to;
  bool all_months = false;
};

class VerificationCache {
public:
  // Keeps references; they must outlive the cache. `netcdf` is the
  // service's netCDF mutex (observed files are netCDF).
  VerificationCache(const ServiceConfig& config, const RegimeModel& model, const GuidanceArchive& archive,
                    std::mutex& netcdf);

  // The report for the guidance issued in [issued_from, issued_to] and no
  // later than `to` (a later issue has no valid date in the range), scored
  // on valid dates in [from, to], of archive generation `generation`. Throws
  // HttpError 404 when the archive holds no such issue; verify's "no
  // guidance valid between" and "no observations between" come back as its
  // answer (400); HttpError 503 when one verification runs and another
  // already waits. Thread-safe.
  HttpAnswer answer(const VerificationRange& range, unsigned generation);

private:
  HttpAnswer verify(const std::vector<std::string>& dates, const VerificationRange& range);
  std::optional<HttpAnswer> cached(const std::string& key);

  const ServiceConfig& config_;
  const RegimeModel& model_;
  const GuidanceArchive& archive_;
  std::mutex& netcdf_;
  std::mutex mutex_;    // answers_
  std::mutex running_;  // one verification at a time
  std::atomic<int> queued_{0};
  std::map<std::string, HttpAnswer> answers_;  // "from|to|issued_from|issued_to|all_months|generation" -> answer
};

}  // namespace isohypse
