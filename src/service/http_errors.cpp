#include "service/http_errors.hpp"

#include <spdlog/spdlog.h>

#include <nlohmann/json.hpp>

#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

constexpr const char* kInternal = "internal error (see the service log)";

}  // namespace

int http_status(const std::exception& e) {
  if (const auto* h = dynamic_cast<const HttpError*>(&e)) return h->status();
  if (dynamic_cast<const InputError*>(&e)) return 400;
  if (dynamic_cast<const DataError*>(&e)) return 422;
  return 500;  // NumericalError, InternalError, and whatever else escaped the library
}

std::string http_error_message(const std::exception& e) {
  // A refusal and a failed computation say why; a bug's or a foreign exception's text is for the log only.
  if (dynamic_cast<const HttpError*>(&e) || dynamic_cast<const NumericalError*>(&e) || http_status(e) < 500)
    return e.what();
  return kInternal;
}

HttpAnswer error_answer(const std::exception& e, const std::string& where) {
  const int status = http_status(e);
  if (status >= 500 && !dynamic_cast<const HttpError*>(&e)) spdlog::error("{}: {}", where, e.what());
  return {status, error_body(http_error_message(e))};
}

std::string error_body(const std::string& message) { return nlohmann::json{{"error", message}}.dump(); }

}  // namespace isohypse
