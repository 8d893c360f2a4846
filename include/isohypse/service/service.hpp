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
// HTTP API (JSON unless stated; errors are {"error": "..."} with a 4xx/5xx
// status):
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
#pragma once

#include <cstddef>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

namespace isohypse {

struct ServiceConfig {
  std::string model;                    // regime model file (required)
  std::string inbox;                    // forecast inbox folder (required)
  std::string archive;                  // guidance archive folder (required)
  std::string listen = "127.0.0.1:8642";  // ADDRESS:PORT; port 0 picks a free port
  std::vector<std::string> reforecasts; // files or globs; empty: no bias correction
  std::vector<std::string> observed;    // for verification; empty: the model's record
  std::string variable;                 // forecast height variable; empty: automatic
  int lag = 3;                          // initialisations in the lagged ensemble (0: all processed)
  std::string weights = "equal";        // equal | linear | exp:DAYS
  int members = 0;                      // expected members per initialisation (0: any)
  double poll_seconds = 10;             // inbox poll interval, 0.1 .. 3600
  std::string token;                    // write token for POST /api/v1/runs (never logged)
  std::string land_mask = "/usr/share/ncarg/data/cdf/landsea.nc";  // for coastlines; "" draws none
  int threads = 16;                     // HTTP worker threads
  std::size_t max_body_bytes = 64 * 1024;
  int timeout_seconds = 10;             // read/write timeout per request for slow clients

  // Keys as above (plus "comment"); unknown keys are refused by name.
  // Throws InputError naming `src` and the key.
  static ServiceConfig from_json(const nlohmann::json& j, const std::string& src);
  // Checks required settings and ranges; throws InputError naming the
  // setting.
  void validate() const;
  std::string host() const;  // from listen
  int port() const;
};

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
