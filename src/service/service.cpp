#include "isohypse/service/service.hpp"

#include <httplib.h>
#include <spdlog/spdlog.h>

#include <filesystem>
#include <mutex>
#include <thread>

#include "isohypse/base/error.hpp"
#include "isohypse/io/regime_model_file.hpp"
#include "isohypse/service/archive.hpp"
#include "isohypse/service/inbox.hpp"
#include "stages/classify/calibrated_guidance.hpp"
#include "service/model_view.hpp"
#include "service/routes.hpp"
#include "service/verification_cache.hpp"
#include "service/worker.hpp"

namespace isohypse {

// The parts, in the order they are built (each refers to those before it).
namespace {

// The regime model; a calibration for another model would fail every run,
// so it is refused here, before any folder is made.
RegimeModel model_and_calibration(const ServiceConfig& config) {
  RegimeModel model = read_regime_model(config.model);
  if (!config.calibration.empty()) load_calibration(model, config.calibration);
  return model;
}

}  // namespace

struct Service::Impl {
  ServiceConfig config;
  RegimeModel model;
  GuidanceArchive archive;
  Inbox inbox;
  std::mutex netcdf;  // netCDF-C is not thread-safe: runs and verification take turns
  ModelView view;
  Worker worker;
  VerificationCache verification;
  GatedServer server;
  std::thread http_thread;

  explicit Impl(ServiceConfig c)
      : config(std::move(c)),
        model(model_and_calibration(config)),
        archive(config.archive),
        inbox(config.inbox, model.domain, config.variable, config.members),
        view(model, config.land_mask),
        worker(config, model, inbox, archive, netcdf),
        verification(config, model, archive, netcdf),
        server(gate_limits(config)) {
    configure_server(server, config);
    add_routes(server, ServiceParts{config, model, archive, inbox, view, worker, verification});
  }
};

Service::Service(ServiceConfig config) {
  config.validate();
  impl_ = std::make_unique<Impl>(std::move(config));
}

Service::~Service() { stop(); }

int Service::start() {
  Impl& s = *impl_;
  const std::string host = s.config.host();
  int port = s.config.port();
  if (port == 0) port = s.server.bind_to_any_port(host);
  else if (!s.server.bind_to_port(host, port)) port = -1;
  if (port <= 0) throw InputError("serve: cannot listen on " + s.config.listen + " (address in use or not local?)");
  s.http_thread = std::thread([&s] { s.server.listen_after_bind(); });
  s.worker.start();
  spdlog::info("serving on http://{}:{} (model {} {}, {} issues in the archive, inbox {}, poll {} s)", host, port,
               std::filesystem::path(s.model.path).filename().string(), s.model.sha256.substr(0, 12),
               s.archive.size(), s.config.inbox, s.config.poll_seconds);
  return port;
}

void Service::stop() {
  if (!impl_) return;
  // The worker first: a run in progress finishes and clients waiting for theirs get an answer.
  impl_->worker.stop();
  impl_->server.stop();
  if (impl_->http_thread.joinable()) impl_->http_thread.join();
}

}  // namespace isohypse
