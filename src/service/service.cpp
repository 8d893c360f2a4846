#include "isohypse/service/service.hpp"

#include <httplib.h>
#include <spdlog/spdlog.h>

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <deque>
#include <filesystem>
#include <future>
#include <regex>
#include <set>
#include <thread>

#include "isohypse/io/regime_model_file.hpp"
#include "isohypse/service/archive.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/base/calendar.hpp"
#include "isohypse/stages/classify.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/json_config.hpp"
#include "isohypse/service/inbox.hpp"
#include "isohypse/render/service_page.hpp"
#include "isohypse/render/map_svg.hpp"
#include "isohypse/numerics/regime_model.hpp"
#include "isohypse/stages/verify.hpp"

namespace isohypse {

namespace fs = std::filesystem;
using json = nlohmann::json;

// ---------------------------------------------------------------- config


ServiceConfig ServiceConfig::from_json(const json& j, const std::string& src) {
  ServiceConfig c;
  check_keys(j, {"model", "inbox", "archive", "listen", "reforecasts", "observed", "variable", "lag", "weights",
                 "members", "poll_seconds", "token", "land_mask", "threads", "max_body_bytes", "timeout_seconds",
                 "comment"},
             src);
  get_value(j, "model", c.model, src);
  get_value(j, "inbox", c.inbox, src);
  get_value(j, "archive", c.archive, src);
  get_value(j, "listen", c.listen, src);
  get_string_list(j, "reforecasts", c.reforecasts, src);
  get_string_list(j, "observed", c.observed, src);
  get_value(j, "variable", c.variable, src);
  get_value(j, "lag", c.lag, src);
  get_value(j, "weights", c.weights, src);
  get_value(j, "members", c.members, src);
  get_value(j, "poll_seconds", c.poll_seconds, src);
  get_value(j, "token", c.token, src);
  get_value(j, "land_mask", c.land_mask, src);
  get_value(j, "threads", c.threads, src);
  get_value(j, "max_body_bytes", c.max_body_bytes, src);
  get_value(j, "timeout_seconds", c.timeout_seconds, src);
  return c;
}

void ServiceConfig::validate() const {
  if (model.empty()) throw InputError("serve: no regime model (--model or \"model\")");
  if (inbox.empty()) throw InputError("serve: no inbox folder (--inbox or \"inbox\")");
  if (archive.empty()) throw InputError("serve: no archive folder (--archive or \"archive\")");
  if (lag < 0) throw InputError("serve: lag must be 0 (all) or positive, got " + std::to_string(lag));
  if (members < 0) throw InputError("serve: members must be 0 (any) or positive, got " + std::to_string(members));
  if (!(poll_seconds >= 0.1 && poll_seconds <= 3600))
    throw InputError("serve: poll_seconds must lie in 0.1 .. 3600, got " + std::to_string(poll_seconds));
  if (threads < 2 || threads > 256) throw InputError("serve: threads must lie in 2 .. 256");
  if (max_body_bytes < 256 || max_body_bytes > (16u << 20)) throw InputError("serve: max_body_bytes must lie in 256 .. 16 MiB");
  if (timeout_seconds < 1 || timeout_seconds > 600) throw InputError("serve: timeout_seconds must lie in 1 .. 600");
  Weighting::parse(weights);
  port();
}

std::string ServiceConfig::host() const {
  const auto colon = listen.rfind(':');
  if (colon == std::string::npos || colon == 0)
    throw InputError("serve: listen '" + listen + "' is not ADDRESS:PORT (e.g. 127.0.0.1:8642)");
  return listen.substr(0, colon);
}

int ServiceConfig::port() const {
  host();
  const std::string p = listen.substr(listen.rfind(':') + 1);
  if (p.empty() || p.size() > 5 || p.find_first_not_of("0123456789") != std::string::npos || std::stoi(p) > 65535)
    throw InputError("serve: listen '" + listen + "': the port must be 0 .. 65535");
  return std::stoi(p);
}

// ---------------------------------------------------------------- helpers

namespace {

// An HTTP-level refusal: thrown inside handlers, turned into {"error": ...}.
struct HttpError {
  int status;
  std::string message;
};

void send_json(httplib::Response& res, const std::string& body, int status = 200) {
  res.status = status;
  res.set_content(body, "application/json");
}

void send_error(httplib::Response& res, int status, const std::string& message) {
  send_json(res, json{{"error", message}}.dump(), status);
}

const char* reason_phrase(int status) {
  switch (status) {
    case 400: return "bad request";
    case 401: return "unauthorised";
    case 404: return "not found";
    case 405: return "method not allowed";
    case 413: return "request body too large";
    case 414: return "request URI too long";
    case 422: return "cannot be processed";
    case 503: return "service unavailable";
    default: return status >= 500 ? "internal error" : "request refused";
  }
}

// Printable, bounded text for the log (a path is the client's text).
std::string loggable(const std::string& s) {
  std::string o;
  for (char c : s.substr(0, 200)) o += (c >= 0x20 && c < 0x7f) ? c : '?';
  return o;
}

// The query parameter, validated as YYYY-MM-DD, or "" when absent.
std::string date_param(const httplib::Request& req, const char* name) {
  if (!req.has_param(name)) return {};
  const std::string v = req.get_param_value(name);
  if (!is_issue_date(v)) throw HttpError{400, std::string(name) + " must be a date YYYY-MM-DD, got '" + loggable(v) + "'"};
  return v;
}

bool same_secret(const std::string& given, const std::string& token) {
  // Constant time in the content, so the token cannot be found byte by byte from response times.
  if (given.size() != token.size() || token.empty()) return false;
  unsigned diff = 0;
  for (std::size_t i = 0; i < token.size(); ++i)
    diff |= static_cast<unsigned char>(given[i]) ^ static_cast<unsigned char>(token[i]);
  return diff == 0;
}

double round1(double v) { return std::round(v * 10) / 10; }


}  // namespace

// ---------------------------------------------------------------- service

struct Service::Impl {
  ServiceConfig cfg;
  RegimeModel model;
  GuidanceArchive archive;
  Inbox inbox;
  std::string model_json;                    // GET /api/v1/model, built once
  std::map<std::string, std::string> maps;   // regime id -> SVG
  httplib::Server server;
  std::thread http_thread, worker_thread;

  // netCDF-C is not thread-safe: the worker's runs and verification against observed files take turns.
  std::mutex netcdf;

  // Runs asked for over HTTP, done by the worker.
  struct Job {
    std::vector<std::string> files;
    std::promise<std::pair<int, json>> done;  // status, body
  };
  std::mutex jobs_mutex;
  std::condition_variable jobs_cv;
  std::deque<std::shared_ptr<Job>> jobs;
  bool stopping = false;

  std::mutex status_mutex;
  json last_run;              // for /health
  std::atomic<bool> running{false};
  std::atomic<unsigned> generation{0};  // bumped on every archive write (verification cache key)
  std::mutex verification_mutex;
  std::map<std::string, std::pair<int, std::string>> verification_cache;

  explicit Impl(ServiceConfig c)
      : cfg(std::move(c)),
        model(read_regime_model(cfg.model)),
        archive(cfg.archive),
        inbox(cfg.inbox, model.domain, cfg.variable, cfg.members) {
    build_model_views();
    routes();
  }

  void build_model_views() {
    LandMask mask;
    if (!cfg.land_mask.empty()) {
      try {
        mask = read_land_mask(cfg.land_mask);
      } catch (const Error& e) {
        spdlog::warn("no coastlines on the regime maps: {}", e.what());
      }
    }
    const std::vector<Segment> coast = coastline(mask, model.grid);
    const double scale = arma::abs(model.patterns).max();  // one colour scale, so that maps compare
    json regimes = json::array();
    const arma::uword nla = model.grid.n_lat(), nlo = model.grid.n_lon();
    for (int r = 0; r < model.k(); ++r) {
      const RegimeInfo& info = model.regimes[r];
      char freq[16];
      std::snprintf(freq, sizeof freq, "%.0f%%", 100 * info.frequency);
      maps[info.id] = regime_map_svg(model.patterns.col(r), model.grid, coast,
                                     info.id + "  " + info.name + "  (" + freq + " of days)", scale,
                                     regime_colour(r));
      json pattern = json::array();
      for (arma::uword i = 0; i < nla; ++i) {
        json row = json::array();
        for (arma::uword j = 0; j < nlo; ++j) row.push_back(round1(model.patterns(i * nlo + j, r)));
        pattern.push_back(row);
      }
      json regime = regime_json(info);
      regime["colour"] = regime_colour(r);
      regime["map"] = "/api/v1/model/regimes/" + info.id + ".svg";
      regime["pattern_m"] = pattern;
      regimes.push_back(std::move(regime));
    }
    json months = model.months;
    json m = {{"format", "isohypse-model-summary"},
              {"format_version", model.format_version},
              {"file", fs::path(model.path).filename().string()},
              {"sha256", model.sha256},
              {"domain", model.domain.to_string()},
              {"variable", model.variable},
              {"calendar", calendar_name(model.calendar)},
              {"season_months", months},
              {"no_regime_threshold", model.no_regime_threshold},
              {"eof_count", model.n_eof()},
              {"grid", {{"lat", std::vector<double>(model.grid.lat.begin(), model.grid.lat.end())},
                        {"lon", std::vector<double>(model.grid.lon.begin(), model.grid.lon.end())},
                        {"pattern_layout", "pattern_m[i_lat][i_lon], latitudes ascending, metres"}}},
              {"regimes", regimes},
              {"transitions", transition_json(model_states(model), model.transition,
                                              arma::conv_to<arma::mat>::from(model.transition_counts))},
              {"regime_count_table", {{"k_automatic", model.k_automatic}, {"rows", k_table_json(model.k_table)}}},
              {"palette", palette_json()},
              {"caution", kCaution}};
    model_json = m.dump();
  }

  // ---- HTTP

  // Wraps a handler: library errors and HttpError become JSON errors with their status.
  httplib::Server::Handler guard(std::function<void(const httplib::Request&, httplib::Response&)> h) {
    return [h = std::move(h)](const httplib::Request& req, httplib::Response& res) {
      try {
        h(req, res);
      } catch (const HttpError& e) {
        send_error(res, e.status, e.message);
      } catch (const InputError& e) {
        send_error(res, 422, e.what());
      } catch (const DataError& e) {
        send_error(res, 422, e.what());
      } catch (const std::exception& e) {
        spdlog::error("{} {}: {}", req.method, loggable(req.path), e.what());
        send_error(res, 500, "internal error (see the service log)");
      }
    };
  }

  void routes() {
    server.new_task_queue = [n = cfg.threads] { return new httplib::ThreadPool(static_cast<size_t>(n)); };
    server.set_payload_max_length(cfg.max_body_bytes);
    server.set_read_timeout(cfg.timeout_seconds, 0);
    server.set_write_timeout(cfg.timeout_seconds, 0);
    server.set_keep_alive_timeout(2);  // idle browsers must not hold the worker threads
    server.set_keep_alive_max_count(1000);
    server.set_tcp_nodelay(true);  // headers and body go out in separate writes: without it, delayed ACKs add 40 ms

    static thread_local std::chrono::steady_clock::time_point started;
    server.set_pre_routing_handler([](const httplib::Request&, httplib::Response&) {
      started = std::chrono::steady_clock::now();
      return httplib::Server::HandlerResponse::Unhandled;
    });
    server.set_logger([](const httplib::Request& req, const httplib::Response& res) {
      const double ms = std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - started).count();
      spdlog::info("{} {} {} {:.1f} ms", loggable(req.method), loggable(req.path), res.status, ms);
    });
    server.set_error_handler([](const httplib::Request&, httplib::Response& res) {
      if (res.body.empty()) send_error(res, res.status, reason_phrase(res.status));
    });

    server.Get("/", guard([](const httplib::Request&, httplib::Response& res) {
      res.set_header("Content-Security-Policy",
                     "default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; img-src 'self'; "
                     "connect-src 'self'");
      res.set_content(service_page_html(), "text/html; charset=utf-8");
    }));
    server.Get("/health", guard([this](const httplib::Request&, httplib::Response& res) {
      json h = {{"status", "ok"},
                {"version", ISOHYPSE_VERSION},
                {"model", {{"file", fs::path(model.path).filename().string()}, {"sha256", model.sha256},
                           {"regimes", model.k()}}},
                {"archive", {{"issues", archive.size()}}},
                {"inbox", inbox.state()}};
      auto latest = archive.latest();
      h["latest_issue_date"] = latest ? json(*latest) : json();
      h["inbox"]["run_in_progress"] = running.load();
      std::lock_guard lock(status_mutex);
      h["inbox"]["last_run"] = last_run;
      send_json(res, h.dump());
    }));
    server.Get("/api/v1/model", guard([this](const httplib::Request&, httplib::Response& res) {
      send_json(res, model_json);
    }));
    server.Get(R"(/api/v1/model/regimes/([^/]*))", guard([this](const httplib::Request& req, httplib::Response& res) {
      static const std::regex form(R"(R[0-9]{1,4}\.svg)");
      const std::string name = req.matches[1];
      if (!std::regex_match(name, form)) throw HttpError{400, "a regime map is R<number>.svg, got '" + loggable(name) + "'"};
      auto it = maps.find(name.substr(0, name.size() - 4));
      if (it == maps.end()) throw HttpError{404, "no regime " + name.substr(0, name.size() - 4) + " in this model"};
      res.set_header("Cache-Control", "max-age=3600");
      res.set_content(it->second, "image/svg+xml");
    }));
    server.Get("/api/v1/guidance/latest", guard([this](const httplib::Request&, httplib::Response& res) {
      auto latest = archive.latest();
      if (!latest) throw HttpError{404, "the archive holds no guidance yet"};
      send_document(res, *latest);
    }));
    server.Get(R"(/api/v1/guidance/(.*))", guard([this](const httplib::Request& req, httplib::Response& res) {
      const std::string date = req.matches[1];
      if (!is_issue_date(date)) throw HttpError{400, "an issue date is YYYY-MM-DD, got '" + loggable(date) + "'"};
      send_document(res, date);
    }));
    server.Get("/api/v1/guidance", guard([this](const httplib::Request& req, httplib::Response& res) {
      const std::string from = date_param(req, "from"), to = date_param(req, "to");
      if (!from.empty() && !to.empty() && from > to) throw HttpError{400, "from is after to"};
      json list = json::array();
      for (const auto& d : archive.dates(from, to)) list.push_back({{"issue_date", d}, {"href", "/api/v1/guidance/" + d}});
      json out = {{"from", from.empty() ? json() : json(from)}, {"to", to.empty() ? json() : json(to)},
                  {"count", list.size()}, {"issues", list}};
      send_json(res, out.dump());
    }));
    server.Get("/api/v1/verification", guard([this](const httplib::Request& req, httplib::Response& res) {
      verification(req, res);
    }));
    server.Post("/api/v1/runs", guard([this](const httplib::Request& req, httplib::Response& res) {
      post_run(req, res);
    }));
  }

  void send_document(httplib::Response& res, const std::string& date) {
    auto text = archive.text(date);
    if (!text) throw HttpError{404, "no guidance issued on " + date};
    send_json(res, *text);
  }

  void verification(const httplib::Request& req, httplib::Response& res) {
    const std::string from = date_param(req, "from"), to = date_param(req, "to");
    if (!from.empty() && !to.empty() && from > to) throw HttpError{400, "from is after to"};
    const std::vector<std::string> dates = archive.dates(from, to);
    if (dates.empty())
      throw HttpError{404, "no guidance issued in " + (from.empty() ? "(start)" : from) + " .. " + (to.empty() ? "(end)" : to)};
    const std::string key = from + "|" + to + "|" + std::to_string(generation.load());
    {
      std::lock_guard lock(verification_mutex);
      auto it = verification_cache.find(key);
      if (it != verification_cache.end()) return send_json(res, it->second.second, it->second.first);
    }
    VerifyConfig vc;
    for (const auto& d : dates) vc.guidance.push_back(archive.path_of(d));
    vc.observed = cfg.observed;
    vc.variable = cfg.variable;
    std::pair<int, std::string> result;
    try {
      std::lock_guard lock(netcdf);
      result = {200, verify_guidance(model, vc).dump()};
    } catch (const Error& e) {
      // The archive is there but cannot be verified (no observations for its valid dates, another model's files).
      result = {422, json{{"error", e.what()}}.dump()};
    }
    std::lock_guard lock(verification_mutex);
    if (verification_cache.size() > 64) verification_cache.clear();
    verification_cache[key] = result;
    send_json(res, result.second, result.first);
  }

  void post_run(const httplib::Request& req, httplib::Response& res) {
    const std::string auth = req.get_header_value("Authorization");
    const std::string prefix = "Bearer ";
    if (cfg.token.empty())
      throw HttpError{401, "runs are disabled: the service has no write token (ISOHYPSE_TOKEN or \"token\")"};
    if (auth.compare(0, prefix.size(), prefix) != 0 || !same_secret(auth.substr(prefix.size()), cfg.token)) {
      res.set_header("WWW-Authenticate", "Bearer");
      throw HttpError{401, "a valid \"Authorization: Bearer TOKEN\" header is required"};
    }
    json body;
    try {
      body = json::parse(req.body);
    } catch (const json::exception&) {
      throw HttpError{400, "the body must be JSON: {\"files\": [\"NAME.nc\", ...]}"};
    }
    if (!body.is_object() || !body.contains("files") || !body["files"].is_array() || body["files"].empty() ||
        body.size() != 1)
      throw HttpError{400, "the body must be {\"files\": [\"NAME.nc\", ...]} with at least one file"};
    static const std::regex safe(R"([A-Za-z0-9_][A-Za-z0-9_.+-]{0,200}\.nc)");
    auto job = std::make_shared<Job>();
    for (const auto& f : body["files"]) {
      if (!f.is_string() || !std::regex_match(f.get<std::string>(), safe) ||
          f.get<std::string>().find("..") != std::string::npos)
        throw HttpError{400, "a file is a plain inbox file name NAME.nc, got " + loggable(f.dump())};
      if (!fs::is_regular_file(fs::path(cfg.inbox) / f.get<std::string>()))
        throw HttpError{404, "no file " + f.get<std::string>() + " in the inbox"};
      job->files.push_back(f.get<std::string>());
    }
    auto result = job->done.get_future();
    {
      std::lock_guard lock(jobs_mutex);
      if (stopping) throw HttpError{503, "the service is stopping"};
      jobs.push_back(job);
    }
    jobs_cv.notify_all();
    auto [status, out] = result.get();
    send_json(res, out.dump(), status);
  }

  // ---- the worker

  // One initialisation: check, classify, archive, move. Returns a summary for the log, /health and POST.
  json run_group(const InboxGroup& g) {
    const auto t0 = std::chrono::steady_clock::now();
    json out = {{"initialisation", g.date}, {"files", json::array()}};
    for (const auto& f : g.files) out["files"].push_back(fs::path(f).filename().string());
    auto finish = [&](const std::string& outcome, const std::string& message) {
      const double ms = std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t0).count();
      out["outcome"] = outcome;
      out["message"] = message;
      out["ms"] = std::round(ms);
      if (outcome == "issued") spdlog::info("run {}: {} in {:.0f} ms", g.date, message, ms);
      else spdlog::warn("run {}: {}: {} ({:.0f} ms)", g.date, outcome, message, ms);
      std::lock_guard lock(status_mutex);
      last_run = out;
      return out;
    };
    std::lock_guard lock(netcdf);
    const auto bad = inbox.check(g, model.grid);
    if (!bad.empty()) {
      out["quarantined"] = json::array();
      for (const auto& [name, why] : bad) out["quarantined"].push_back({{"file", name}, {"reason", why}});
      return finish("quarantined", std::to_string(bad.size()) + " unreadable file(s) moved to quarantine; the rest wait");
    }
    ClassifyConfig cc;
    cc.forecasts = inbox.processed_before(g.date, cfg.lag > 0 ? cfg.lag - 1 : 0);
    cc.forecasts.insert(cc.forecasts.end(), g.files.begin(), g.files.end());
    cc.reforecasts = cfg.reforecasts;
    cc.variable = cfg.variable;
    cc.lag = cfg.lag;
    cc.weights = Weighting::parse(cfg.weights);
    cc.issue_date = parse_date(g.date, Calendar::ProlepticGregorian, "issue date");
    json guidance;
    try {
      // The observed files also give the latest observed regime and its age;
      // when they cannot (unreadable, another grid), the guidance goes out without it.
      cc.analysis = cfg.observed;
      try {
        guidance = classify_forecasts(model, cc);
      } catch (const Error& e) {
        if (cc.analysis.empty()) throw;
        spdlog::warn("run {}: observed files not usable for the observed regime ({}); classifying without them",
                     g.date, e.what());
        cc.analysis.clear();
        guidance = classify_forecasts(model, cc);
      }
    } catch (const Error& e) {
      // The files read alone but not together (duplicate members, mixed grids): keep them out of later runs.
      for (const auto& f : g.files) inbox.quarantine(f, std::string("classification failed: ") + e.what());
      return finish("quarantined", std::string("classification failed: ") + e.what());
    }
    try {
      archive.store(guidance);
    } catch (const Error& e) {
      // A full disk: the archive is as it was and the files stay in the inbox for the next poll.
      return finish("failed", std::string("cannot write the guidance: ") + e.what());
    }
    ++generation;
    inbox.mark_processed(g);
    out["issue_date"] = g.date;
    out["href"] = "/api/v1/guidance/" + g.date;
    return finish("issued", "guidance from " + std::to_string(guidance["ensemble"]["members"].get<int>()) +
                                " members of " + std::to_string(guidance["ensemble"]["lag"].get<int>()) +
                                " initialisation(s)");
  }

  void worker() {
    using namespace std::chrono;
    auto next_poll = steady_clock::now();
    for (;;) {
      std::shared_ptr<Job> job;
      {
        std::unique_lock lock(jobs_mutex);
        jobs_cv.wait_until(lock, next_poll, [&] { return stopping || !jobs.empty(); });
        if (stopping) break;
        if (!jobs.empty()) {
          job = jobs.front();
          jobs.pop_front();
        }
      }
      running = true;
      try {
        if (job) run_job(*job);
        else {
          std::vector<InboxGroup> ready;
          {
            std::lock_guard lock(netcdf);
            ready = inbox.poll();
          }
          for (const auto& g : ready) run_group(g);
          next_poll = steady_clock::now() + duration_cast<steady_clock::duration>(duration<double>(cfg.poll_seconds));
        }
      } catch (const std::exception& e) {
        spdlog::error("worker: {}", e.what());  // the service carries on
      }
      running = false;
    }
    // Tell waiting clients rather than leave them hanging.
    std::lock_guard lock(jobs_mutex);
    for (auto& j : jobs) j->done.set_value({503, json{{"error", "the service stopped before the run"}}});
    jobs.clear();
  }

  void run_job(Job& job) {
    try {
      std::vector<std::pair<std::string, std::string>> rejected;
      std::vector<InboxGroup> groups;
      {
        std::lock_guard lock(netcdf);
        groups = inbox.group(job.files, rejected);
      }
      json runs = json::array();
      bool all_issued = rejected.empty();
      for (const auto& g : groups) {
        runs.push_back(run_group(g));
        all_issued = all_issued && runs.back()["outcome"] == "issued";
      }
      json body = {{"runs", runs}, {"rejected", json::array()}};
      for (const auto& [name, why] : rejected) body["rejected"].push_back({{"file", name}, {"reason", why}});
      if (!all_issued) body["error"] = "not every file could be classified (see runs and rejected)";
      job.done.set_value({all_issued ? 200 : 422, body});
    } catch (const InputError& e) {
      job.done.set_value({404, json{{"error", e.what()}}});
    } catch (const std::exception& e) {
      spdlog::error("run: {}", e.what());
      job.done.set_value({500, json{{"error", "internal error (see the service log)"}}});
    }
  }
};

Service::Service(ServiceConfig config) {
  config.validate();
  impl_ = std::make_unique<Impl>(std::move(config));
}

Service::~Service() { stop(); }

int Service::start() {
  Impl& s = *impl_;
  const std::string host = s.cfg.host();
  int port = s.cfg.port();
  if (port == 0) port = s.server.bind_to_any_port(host);
  else if (!s.server.bind_to_port(host, port)) port = -1;
  if (port <= 0) throw InputError("serve: cannot listen on " + s.cfg.listen + " (address in use or not local?)");
  s.http_thread = std::thread([&s] { s.server.listen_after_bind(); });
  s.worker_thread = std::thread([&s] { s.worker(); });
  spdlog::info("serving on http://{}:{} (model {} {}, {} issues in the archive, inbox {}, poll {} s)", host, port,
               fs::path(s.model.path).filename().string(), s.model.sha256.substr(0, 12), s.archive.size(),
               s.cfg.inbox, s.cfg.poll_seconds);
  return port;
}

void Service::stop() {
  if (!impl_) return;
  Impl& s = *impl_;
  {
    std::lock_guard lock(s.jobs_mutex);
    s.stopping = true;
  }
  s.jobs_cv.notify_all();
  if (s.worker_thread.joinable()) s.worker_thread.join();
  s.server.stop();
  if (s.http_thread.joinable()) s.http_thread.join();
}

}  // namespace isohypse
