// The service behind `isohypse serve`: an inbox polled for forecasts, the
// guidance archive, and an HTTP API and web page on top of them.
//
//   worker thread:  poll inbox | ready initialisation | check files (bad ->
//                   quarantine) | classify (lag, reforecasts; issue date =
//                   the initialisation's) | archive (atomic) | move inputs to
//                   processed/
//   HTTP threads:   read the archive and the model; verification; hand runs
//                   asked for by POST /api/v1/runs to the worker
//
// HTTP API (JSON unless stated):
//   GET  /                                   the web page (self-contained HTML)
//   GET  /health                             status, version, model sha256,
//                                            latest issue date, inbox state
//   GET  /api/v1/model                       regimes, patterns with lat/lon,
//                                            frequencies, persistence,
//                                            transitions, k table
//   GET  /api/v1/model/regimes/{Rn}.svg      map of a regime's pattern (SVG)
//   GET  /api/v1/guidance/latest             the latest guidance document
//   GET  /api/v1/guidance/{YYYY-MM-DD}       one guidance document
//   GET  /api/v1/guidance?from=&to=          issue dates in the range, links
//   GET  /api/v1/verification?from=&to=      verify_guidance over the range
//   POST /api/v1/runs  {"files": [...]}      classify the named inbox files
//                                            now; needs "Authorization:
//                                            Bearer TOKEN"
// Path and query values must be YYYY-MM-DD or R<digits>; anything else is
// refused with 400 before it reaches a file name.
//
// Errors: every failure is answered {"error": "..."} with one status for its
// kind (src/service/http_errors.hpp), the same on every endpoint:
//   a refusal the handler names   its status: 400 (a malformed date or
//                                 name), 401 (no or a wrong token), 404 (no
//                                 such route, issue date, regime, inbox file,
//                                 or no guidance in a range), 405, 413 (body
//                                 too large), 503 (stopping)
//   InputError                    400 (e.g. verification of guidance with
//                                 no observations for its valid dates)
//   DataError                     422 (a file's contents are wrong, e.g. an
//                                 archived document that is not guidance)
//   NumericalError                500 (with its message)
//   InternalError, anything else  500 "internal error (see the service log)"
// POST /api/v1/runs answers 200 when every file was classified and
// archived, 422 (with the runs and rejected files) when not.
#pragma once

#include <memory>

#include "isohypse/service/service_config.hpp"

namespace isohypse {

class Service {
public:
  // Reads the model, the land mask (a missing mask only loses coastlines,
  // with a warning), opens the archive and the inbox. Throws InputError /
  // DataError like the CLI stages.
  explicit Service(ServiceConfig config);
  ~Service();  // stops
  Service(const Service&) = delete;
  Service& operator=(const Service&) = delete;

  // Binds, then serves and polls on background threads. Returns the bound
  // port. Throws InputError when the address cannot be bound.
  int start();
  // Stops serving and polling (a run in progress finishes first); safe to
  // call from any thread, more than once.
  void stop();

private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace isohypse
