// isohypse serve: the inbox, the guidance archive and the HTTP API.
#include <signal.h>
#include <spdlog/sinks/stdout_color_sinks.h>
#include <spdlog/spdlog.h>

#include <cstdlib>
#include <iostream>
#include <memory>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "isohypse/base/json_config.hpp"
#include "isohypse/service/service.hpp"

namespace isohypse::cli {

namespace {

// The flags, bound straight to the config's fields. --config is defined first: CLI11 runs the options'
// callbacks in the order they were defined, after the whole command line is parsed, so the file is read into
// the config before any flag given is written over it (flags override the file).
void add_serve_options(CLI::App* sub, const std::shared_ptr<ServiceConfig>& cfg) {
  sub->add_option_function<std::string>(
      "--config", [cfg](const std::string& path) { *cfg = ServiceConfig::from_json(read_json_file(path), path); },
      "Service config JSON (see config/service-example.json); flags override it");
  sub->add_option("--model", cfg->model, "Regime model file written by derive");
  sub->add_option("--inbox", cfg->inbox, "Folder polled for forecast files (*.nc)");
  sub->add_option("--archive", cfg->archive, "Folder of the guidance archive");
  sub->add_option("--listen", cfg->listen, "ADDRESS:PORT to listen on (default 127.0.0.1:8642; port 0: any free)");
  sub->add_option("--reforecasts", cfg->reforecasts, "Reforecast files or quoted globs: remove the model's drift");
  sub->add_option("--calibration", cfg->calibration,
                  "Calibration file (isohypse calibrate) for this model: publish calibrated probabilities");
  sub->add_option("--lag", cfg->lag, "Initialisations in the lagged ensemble (default 3; 0: all processed)");
  sub->add_option("--weights", cfg->weights, "equal | linear | exp:DAYS");
  sub->add_option("--observed", cfg->observed,
                  "Analysis files or globs for verification (default: the model's record)");
  sub->add_option("--members", cfg->members, "Expected members per initialisation before it is classified (0: any)");
  sub->add_option("--poll", cfg->poll_seconds, "Inbox poll interval in seconds (default 10)");
  sub->add_option("--bins", cfg->reliability_bins,
                  "Probability bins of the verification's Brier decomposition and reliability diagrams (default 10)");
  sub->add_option("--block-days", cfg->block_days,
                  "Block length of the verification's intervals: N days or auto (default: the lag span + 7 days)");
  add_variable_option(sub, cfg->variable, "Forecast height");
  sub->footer("The write token for POST /api/v1/runs comes from the environment variable ISOHYPSE_TOKEN or the "
              "config's \"token\"; it is never logged. Stop with Ctrl-C (SIGINT) or SIGTERM.");
}

// The log goes to stderr (stdout carries only the address line that scripts read), with the time for each line.
void log_to_stderr() {
  auto level = spdlog::get_level();
  spdlog::set_default_logger(spdlog::stderr_color_mt("serve"));
  spdlog::set_level(level);
  spdlog::set_pattern("%Y-%m-%dT%H:%M:%S.%e %^%l%$ %v");
}

// Only the loopback interface keeps the service on this machine.
bool is_loopback(const std::string& host) {
  return host == "localhost" || host == "::1" || host == "[::1]" || host.rfind("127.", 0) == 0;
}

void serve(ServiceConfig cfg) {
  if (const char* t = std::getenv("ISOHYPSE_TOKEN"); t && *t) cfg.token = t;
  if (cfg.token.empty()) spdlog::warn("no write token (ISOHYPSE_TOKEN): POST /api/v1/runs answers 401");
  log_to_stderr();
  if (!is_loopback(cfg.host()))
    spdlog::warn("--listen {}: the service will answer every client that can reach this address on the network, "
                 "in plain HTTP (no TLS: the write token and the answers travel readable). Put it behind a TLS "
                 "reverse proxy (README, \"The service\") and listen on 127.0.0.1, or keep this address to a "
                 "trusted network.",
                 cfg.listen);
  // Signals are taken by this thread only (sigwait), so the service's threads never see them.
  sigset_t sigs;
  sigemptyset(&sigs);
  sigaddset(&sigs, SIGINT);
  sigaddset(&sigs, SIGTERM);
  pthread_sigmask(SIG_BLOCK, &sigs, nullptr);
  Service service(cfg);
  const int port = service.start();
  std::cout << "isohypse serve: listening on http://" << cfg.host() << ":" << port << "/" << std::endl;
  int sig = 0;
  sigwait(&sigs, &sig);
  spdlog::info("signal {}: stopping", sig);
  service.stop();
}

}  // namespace

void add_serve(CLI::App& app) {
  auto cfg = std::make_shared<ServiceConfig>();
  CLI::App* sub = app.add_subcommand(
      "serve", "Serve guidance over HTTP: poll an inbox for forecasts, classify them, keep an archive");
  add_serve_options(sub, cfg);
  sub->callback([cfg] { serve(*cfg); });
}

}  // namespace isohypse::cli
