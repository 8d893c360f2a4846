// isohypse serve: the inbox, the guidance archive and the HTTP API.
#include <signal.h>
#include <spdlog/sinks/stdout_color_sinks.h>
#include <spdlog/spdlog.h>

#include <cstdlib>
#include <iostream>

#include "cli/commands.hpp"
#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/json_config.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/service/service.hpp"

namespace isohypse::cli {

void add_serve(CLI::App& app) {
  struct Args {
    std::string config, model, inbox, archive, listen, variable, weights;
    std::vector<std::string> reforecasts, observed;
    std::optional<int> lag, members;
    std::optional<double> poll;
  };
  auto a = std::make_shared<Args>();
  CLI::App* sub = app.add_subcommand(
      "serve", "Serve guidance over HTTP: poll an inbox for forecasts, classify them, keep an archive");
  sub->add_option("--config", a->config, "Service config JSON (see config/service-example.json); flags override it");
  sub->add_option("--model", a->model, "Regime model file written by derive");
  sub->add_option("--inbox", a->inbox, "Folder polled for forecast files (*.nc)");
  sub->add_option("--archive", a->archive, "Folder of the guidance archive");
  sub->add_option("--listen", a->listen, "ADDRESS:PORT to listen on (default 127.0.0.1:8642; port 0: any free)");
  sub->add_option("--reforecasts", a->reforecasts, "Reforecast files or quoted globs: remove the model's drift");
  sub->add_option("--lag", a->lag, "Initialisations in the lagged ensemble (default 3; 0: all processed)");
  sub->add_option("--weights", a->weights, "equal | linear | exp:DAYS");
  sub->add_option("--observed", a->observed, "Analysis files or globs for verification (default: the model's record)");
  sub->add_option("--members", a->members, "Expected members per initialisation before it is classified (0: any)");
  sub->add_option("--poll", a->poll, "Inbox poll interval in seconds (default 10)");
  sub->add_option("--variable", a->variable, "Forecast height variable (default: found automatically)");
  sub->footer("The write token for POST /api/v1/runs comes from the environment variable ISOHYPSE_TOKEN or the "
              "config's \"token\"; it is never logged. Stop with Ctrl-C (SIGINT) or SIGTERM.");
  sub->callback([a] {
    ServiceConfig cfg;
    if (!a->config.empty()) {
      nlohmann::json j = read_json_file(a->config);
      cfg = ServiceConfig::from_json(j, a->config);
    }
    auto set = [](auto& field, const auto& value) {
      if (!value.empty()) field = value;
    };
    set(cfg.model, a->model);
    set(cfg.inbox, a->inbox);
    set(cfg.archive, a->archive);
    set(cfg.listen, a->listen);
    set(cfg.reforecasts, a->reforecasts);
    set(cfg.observed, a->observed);
    set(cfg.variable, a->variable);
    set(cfg.weights, a->weights);
    if (a->lag) cfg.lag = *a->lag;
    if (a->members) cfg.members = *a->members;
    if (a->poll) cfg.poll_seconds = *a->poll;
    if (const char* t = std::getenv("ISOHYPSE_TOKEN"); t && *t) cfg.token = t;
    if (cfg.token.empty()) spdlog::warn("no write token (ISOHYPSE_TOKEN): POST /api/v1/runs answers 401");
    // The log goes to stderr (stdout carries only the address line that scripts read), with the time for each line.
    auto level = spdlog::get_level();
    spdlog::set_default_logger(spdlog::stderr_color_mt("serve"));
    spdlog::set_level(level);
    spdlog::set_pattern("%Y-%m-%dT%H:%M:%S.%e %^%l%$ %v");

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
  });
}

}  // namespace isohypse::cli
