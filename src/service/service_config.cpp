#include "isohypse/service/service_config.hpp"

#include "isohypse/base/error.hpp"
#include "isohypse/base/json_config.hpp"

namespace isohypse {

ServiceConfig ServiceConfig::from_json(const nlohmann::json& j, const std::string& src) {
  ServiceConfig c;
  check_keys(j, {"model", "inbox", "archive", "listen", "reforecasts", "calibration", "observed", "variable", "lag", "weights",
                 "members", "poll_seconds", "token", "land_mask", "threads", "max_body_bytes", "timeout_seconds",
                 "reliability_bins", "block_days", "catch_margin", "catch_excess", "comment"},
             src);
  get_value(j, "model", c.model, src);
  get_value(j, "inbox", c.inbox, src);
  get_value(j, "archive", c.archive, src);
  get_value(j, "listen", c.listen, src);
  get_string_list(j, "reforecasts", c.reforecasts, src);
  get_value(j, "calibration", c.calibration, src);
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
  get_value(j, "reliability_bins", c.reliability_bins, src);
  get_value(j, "block_days", c.block_days, src);
  get_value(j, "catch_margin", c.catch_margin, src);
  get_value(j, "catch_excess", c.catch_excess, src);
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
  if (max_body_bytes < 256 || max_body_bytes > (16u << 20))
    throw InputError("serve: max_body_bytes must lie in 256 .. 16 MiB");
  if (timeout_seconds < 1 || timeout_seconds > 600) throw InputError("serve: timeout_seconds must lie in 1 .. 600");
  Weighting::parse(weights);
  port();
  VerifyConfig v = verify_options();
  v.guidance = {archive};  // the request adds the files; here only the post-mortem's own settings are checked
  v.validate();
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

ClassifyConfig ServiceConfig::classify_options() const {
  ClassifyConfig c;
  c.reforecasts = reforecasts;
  c.calibration = calibration;
  c.analysis = observed;
  c.variable = variable;
  c.lag = lag;
  c.weights = Weighting::parse(weights);
  return c;
}

VerifyConfig ServiceConfig::verify_options() const {
  VerifyConfig v;
  v.observed = observed;
  v.variable = variable;
  v.reliability_bins = reliability_bins;
  if (block_days != "lag+7") v.block_length = BlockLength::parse(block_days);
  v.catch_margin = catch_margin;
  v.catch_excess = catch_excess;
  return v;
}

}  // namespace isohypse
