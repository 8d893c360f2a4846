// The service's one mapping from an error's kind to an HTTP status and the
// {"error": ...} body (src/service/http_errors.hpp).
#include <doctest/doctest.h>

#include <new>
#include <nlohmann/json.hpp>
#include <stdexcept>

#include "isohypse/base/error.hpp"
#include "service/http_errors.hpp"

using namespace isohypse;

TEST_CASE("http_status: one status for each kind of error") {
  CHECK(http_status(InputError("x")) == 400);
  CHECK(http_status(DataError("x")) == 422);
  CHECK(http_status(NumericalError("x")) == 500);
  CHECK(http_status(InternalError("x")) == 500);
  CHECK(http_status(Error("x")) == 500);
  CHECK(http_status(std::runtime_error("x")) == 500);
  CHECK(http_status(std::bad_alloc()) == 500);
}

TEST_CASE("http_status: an HttpError keeps its own status") {
  for (int s : {400, 401, 404, 405, 413, 503}) CHECK(http_status(HttpError(s, "x")) == s);
}

TEST_CASE("http_status: errors caught through a base reference keep their kind") {
  try {
    throw DataError("file.nc: no height variable");
  } catch (const std::exception& e) {
    CHECK(http_status(e) == 422);
  }
}

TEST_CASE("http_error_message: the user's and the data's errors say why and a bug says nothing") {
  CHECK(http_error_message(InputError("no such date")) == "no such date");
  CHECK(http_error_message(DataError("bad file")) == "bad file");
  CHECK(http_error_message(NumericalError("no convergence")) == "no convergence");
  CHECK(http_error_message(HttpError(503, "the service is stopping")) == "the service is stopping");
  CHECK(http_error_message(InternalError("index 7 of 3")) == "internal error (see the service log)");
  CHECK(http_error_message(std::runtime_error("secret detail")) == "internal error (see the service log)");
}

TEST_CASE("error_answer: status and a JSON body with only an error") {
  const HttpAnswer a = error_answer(DataError("g.json: not valid JSON"), "test");
  CHECK(a.status == 422);
  const auto body = nlohmann::json::parse(a.body);
  CHECK(body == nlohmann::json{{"error", "g.json: not valid JSON"}});
  const HttpAnswer b = error_answer(InternalError("sizes differ"), "test");
  CHECK(b.status == 500);
  CHECK(nlohmann::json::parse(b.body)["error"] == "internal error (see the service log)");
  CHECK(nlohmann::json::parse(error_body("a \"quoted\" text"))["error"] == "a \"quoted\" text");
}
