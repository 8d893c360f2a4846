// The service's HTTP side: the server's limits and log, the route table,
// the handlers and the validation of what a request names. Path and query
// values must be YYYY-MM-DD, R<digits>.svg or plain inbox file names NAME.nc;
// anything else is refused with 400 before it reaches a file name. Every
// handler answers a failure through http_errors.hpp, as {"error": ...}.
#pragma once

#include <httplib.h>

#include "isohypse/numerics/regime_model.hpp"
#include "isohypse/service/archive.hpp"
#include "isohypse/service/inbox.hpp"
#include "isohypse/service/service_config.hpp"
#include "service/model_view.hpp"
#include "service/request_gate.hpp"
#include "service/verification_cache.hpp"
#include "service/worker.hpp"

namespace isohypse {

// What the handlers read and ask of; every part outlives the server.
struct ServiceParts {
  const ServiceConfig& config;
  const RegimeModel& model;
  const GuidanceArchive& archive;
  const Inbox& inbox;
  const ModelView& view;
  Worker& worker;
  VerificationCache& verification;
};

// The gate's limits from the settings: threads, body size, the whole-request
// deadline (timeout_seconds); the head limits are the gate's defaults.
GateLimits gate_limits(const ServiceConfig& config);

// Body size limit, timeouts, a log line per request, JSON bodies for the
// server's own refusals (no such route, body too large).
void configure_server(httplib::Server& server, const ServiceConfig& config);

// The API of include/isohypse/service/service.hpp.
void add_routes(httplib::Server& server, const ServiceParts& parts);

}  // namespace isohypse
