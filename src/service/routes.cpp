#include "service/routes.hpp"

#include <spdlog/spdlog.h>

#include <chrono>
#include <filesystem>
#include <regex>

#include "isohypse/render/service_page.hpp"
#include "service/http_errors.hpp"

namespace isohypse {

namespace {

namespace fs = std::filesystem;
using json = nlohmann::json;
using Request = httplib::Request;
using Response = httplib::Response;
using Handler = void (*)(const ServiceParts&, const Request&, Response&);

void send(Response& res, const HttpAnswer& answer) {
  res.status = answer.status;
  res.set_content(answer.body, "application/json");
}

void send_json(Response& res, const std::string& body) { send(res, {200, body}); }

const char* reason_phrase(int status) {
  switch (status) {
    case 400: return "bad request";
    case 401: return "unauthorised";
    case 404: return "not found";
    case 405: return "method not allowed";
    case 413: return "request body too large";
    case 414: return "request URI too long";
    case 431: return "request header fields too large";
    case 422: return "cannot be processed";
    case 503: return "service unavailable";
    default: return status >= 500 ? "internal error" : "request refused";
  }
}

// Printable, bounded text for the log and error messages (a path is the client's text).
std::string loggable(const std::string& s) {
  std::string o;
  for (char c : s.substr(0, 200)) o += (c >= 0x20 && c < 0x7f) ? c : '?';
  return o;
}

// The handler, with every failure answered by the service's one mapping (http_errors.hpp).
httplib::Server::Handler guarded(const ServiceParts& parts, Handler handler) {
  return [parts, handler](const Request& req, Response& res) {
    try {
      handler(parts, req, res);
    } catch (const std::exception& e) {
      send(res, error_answer(e, loggable(req.method) + " " + loggable(req.path)));
    }
  };
}

// ---------------------------------------------------------------- request validation

// The query parameter, validated as YYYY-MM-DD, or "" when absent.
std::string date_param(const Request& req, const char* name) {
  if (!req.has_param(name)) return {};
  const std::string v = req.get_param_value(name);
  if (!is_issue_date(v))
    throw HttpError(400, std::string(name) + " must be a date YYYY-MM-DD, got '" + loggable(v) + "'");
  return v;
}

// A yes/no query parameter: "true" or "false", false when absent.
bool flag_param(const Request& req, const char* name) {
  if (!req.has_param(name)) return false;
  const std::string v = req.get_param_value(name);
  if (v != "true" && v != "false")
    throw HttpError(400, std::string(name) + " must be true or false, got '" + loggable(v) + "'");
  return v == "true";
}

// ?FROM=&TO= as a range of dates ("" open).
std::pair<std::string, std::string> date_range(const Request& req, const char* from_name = "from",
                                               const char* to_name = "to") {
  std::string from = date_param(req, from_name), to = date_param(req, to_name);
  if (!from.empty() && !to.empty() && from > to)
    throw HttpError(400, std::string(from_name) + " is after " + to_name);
  return {from, to};
}

bool same_secret(const std::string& given, const std::string& token) {
  // Constant time in the content, so the token cannot be found byte by byte from response times.
  if (given.size() != token.size() || token.empty()) return false;
  unsigned diff = 0;
  for (std::size_t i = 0; i < token.size(); ++i)
    diff |= static_cast<unsigned char>(given[i]) ^ static_cast<unsigned char>(token[i]);
  return diff == 0;
}

void check_token(const Request& req, Response& res, const std::string& token) {
  if (token.empty())
    throw HttpError(401, "runs are disabled: the service has no write token (ISOHYPSE_TOKEN or \"token\")");
  const std::string auth = req.get_header_value("Authorization");
  const std::string prefix = "Bearer ";
  if (auth.compare(0, prefix.size(), prefix) != 0 || !same_secret(auth.substr(prefix.size()), token)) {
    res.set_header("WWW-Authenticate", "Bearer");
    throw HttpError(401, "a valid \"Authorization: Bearer TOKEN\" header is required");
  }
}

// The body {"files": ["NAME.nc", ...]}: plain names of files in the inbox.
std::vector<std::string> run_files(const std::string& text, const std::string& inbox) {
  json body;
  try {
    body = json::parse(text);
  } catch (const json::exception&) {
    throw HttpError(400, "the body must be JSON: {\"files\": [\"NAME.nc\", ...]}");
  }
  if (!body.is_object() || !body.contains("files") || !body["files"].is_array() || body["files"].empty() ||
      body.size() != 1)
    throw HttpError(400, "the body must be {\"files\": [\"NAME.nc\", ...]} with at least one file");
  static const std::regex safe(R"([A-Za-z0-9_][A-Za-z0-9_.+-]{0,200}\.nc)");
  std::vector<std::string> files;
  for (const auto& f : body["files"]) {
    if (!f.is_string() || !std::regex_match(f.get<std::string>(), safe) ||
        f.get<std::string>().find("..") != std::string::npos)
      throw HttpError(400, "a file is a plain inbox file name NAME.nc, got " + loggable(f.dump()));
    if (!fs::is_regular_file(fs::path(inbox) / f.get<std::string>()))
      throw HttpError(404, "no file " + f.get<std::string>() + " in the inbox");
    files.push_back(f.get<std::string>());
  }
  return files;
}

// ---------------------------------------------------------------- handlers

void page(const ServiceParts&, const Request&, Response& res) {
  res.set_header("Content-Security-Policy",
                 "default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; img-src 'self'; "
                 "connect-src 'self'");
  res.set_content(service_page_html(), "text/html; charset=utf-8");
}

void health(const ServiceParts& p, const Request&, Response& res) {
  json h = {{"status", "ok"},
            {"version", ISOHYPSE_VERSION},
            {"model", {{"file", fs::path(p.model.path).filename().string()}, {"sha256", p.model.sha256},
                       {"regimes", p.model.k()}}},
            {"archive", {{"issues", p.archive.size()}}},
            {"inbox", p.inbox.state()}};
  const auto latest = p.archive.latest();
  h["latest_issue_date"] = latest ? json(*latest) : json();
  h["inbox"].update(p.worker.status());  // run_in_progress, last_run
  send_json(res, h.dump());
}

void model(const ServiceParts& p, const Request&, Response& res) { send_json(res, p.view.model_json()); }

void regime_map(const ServiceParts& p, const Request& req, Response& res) {
  static const std::regex form(R"(R[0-9]{1,4}\.svg)");
  const std::string name = req.matches[1];
  if (!std::regex_match(name, form))
    throw HttpError(400, "a regime map is R<number>.svg, got '" + loggable(name) + "'");
  const std::string id = name.substr(0, name.size() - 4);
  const std::string* svg = p.view.map_svg(id);
  if (!svg) throw HttpError(404, "no regime " + id + " in this model");
  res.set_header("Cache-Control", "max-age=3600");
  res.set_content(*svg, "image/svg+xml");
}

void send_document(const ServiceParts& p, Response& res, const std::string& date) {
  const auto text = p.archive.text(date);
  if (!text) throw HttpError(404, "no guidance issued on " + date);
  send_json(res, *text);
}

void latest_guidance(const ServiceParts& p, const Request&, Response& res) {
  const auto latest = p.archive.latest();
  if (!latest) throw HttpError(404, "the archive holds no guidance yet");
  send_document(p, res, *latest);
}

void guidance_of(const ServiceParts& p, const Request& req, Response& res) {
  const std::string date = req.matches[1];
  if (!is_issue_date(date)) throw HttpError(400, "an issue date is YYYY-MM-DD, got '" + loggable(date) + "'");
  send_document(p, res, date);
}

void guidance_list(const ServiceParts& p, const Request& req, Response& res) {
  const auto [from, to] = date_range(req);
  json list = json::array();
  for (const auto& d : p.archive.dates(from, to))
    list.push_back({{"issue_date", d}, {"href", "/api/v1/guidance/" + d}});
  json out = {{"from", from.empty() ? json() : json(from)}, {"to", to.empty() ? json() : json(to)},
              {"count", list.size()}, {"issues", list}};
  send_json(res, out.dump());
}

// from/to: valid dates, as verify's --from/--to; issued_from/issued_to:
// issue dates; all_months=true: verify's --all-months.
void verification(const ServiceParts& p, const Request& req, Response& res) {
  const auto [from, to] = date_range(req);
  const auto [issued_from, issued_to] = date_range(req, "issued_from", "issued_to");
  const bool all_months = flag_param(req, "all_months");
  send(res, p.verification.answer({from, to, issued_from, issued_to, all_months}, p.worker.generation()));
}

void post_run(const ServiceParts& p, const Request& req, Response& res) {
  check_token(req, res, p.config.token);
  std::future<HttpAnswer> answer = p.worker.submit(run_files(req.body, p.config.inbox));
  send(res, answer.get());
}

}  // namespace

GateLimits gate_limits(const ServiceConfig& config) {
  GateLimits limits;
  limits.threads = config.threads;
  limits.max_body_bytes = config.max_body_bytes;
  limits.deadline_seconds = config.timeout_seconds;
  return limits;
}

void configure_server(httplib::Server& server, const ServiceConfig& config) {
  // The gate (request_gate.hpp) bounds what a request may hold and how long it may take; these are a second line.
  server.set_payload_max_length(config.max_body_bytes);
  server.set_read_timeout(config.timeout_seconds, 0);
  server.set_write_timeout(config.timeout_seconds, 0);
  server.set_tcp_nodelay(true);  // headers and body go out in separate writes: without it, delayed ACKs add 40 ms

  static thread_local std::chrono::steady_clock::time_point started;
  server.set_pre_routing_handler([](const Request&, Response&) {
    started = std::chrono::steady_clock::now();
    return httplib::Server::HandlerResponse::Unhandled;
  });
  server.set_logger([](const Request& req, const Response& res) {
    const double ms = std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - started).count();
    spdlog::info("{} {} {} {:.1f} ms", loggable(req.method), loggable(req.path), res.status, ms);
  });
  server.set_error_handler([](const Request&, Response& res) {
    if (res.body.empty()) send(res, {res.status, error_body(reason_phrase(res.status))});
  });
}

void add_routes(httplib::Server& server, const ServiceParts& parts) {
  server.Get("/", guarded(parts, page));
  server.Get("/health", guarded(parts, health));
  server.Get("/api/v1/model", guarded(parts, model));
  server.Get(R"(/api/v1/model/regimes/([^/]*))", guarded(parts, regime_map));
  server.Get("/api/v1/guidance/latest", guarded(parts, latest_guidance));
  server.Get(R"(/api/v1/guidance/(.*))", guarded(parts, guidance_of));
  server.Get("/api/v1/guidance", guarded(parts, guidance_list));
  server.Get("/api/v1/verification", guarded(parts, verification));
  server.Post("/api/v1/runs", guarded(parts, post_run));
}

}  // namespace isohypse
