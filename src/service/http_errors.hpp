// Failures as HTTP answers: the service's one mapping from an error's kind to
// a status, used by every handler, the verification endpoint and the runs
// the worker does for POST /api/v1/runs.
//
//   thrown                 status  body {"error": ...}
//   HttpError              its own (400, 401, 404, 405, 413, 503: the request
//                          is refused for a reason the handler names, e.g. it
//                          names an issue date or file that does not exist)
//   InputError             400     the message
//   DataError              422     the message (a file's contents are wrong)
//   NumericalError         500     the message (a computation failed)
//   InternalError          500     "internal error (see the service log)"
//   anything else          500     "internal error (see the service log)"
//
// An unexpected 5xx's full message goes to the log; a bug's message never
// goes to the client.
#pragma once

#include <exception>
#include <stdexcept>
#include <string>

namespace isohypse {

// A refusal with an explicit HTTP status (4xx or 503), thrown inside the
// service and answered as {"error": message}.
class HttpError : public std::runtime_error {
public:
  HttpError(int status, const std::string& message) : std::runtime_error(message), status_(status) {}
  int status() const { return status_; }

private:
  int status_;
};

// A status and a JSON body, ready to send.
struct HttpAnswer {
  int status = 200;
  std::string body;
};

// The status of a failure (the table above).
int http_status(const std::exception& e);

// The text of the {"error": ...} body for a failure (the table above).
std::string http_error_message(const std::exception& e);

// The whole answer for a failure: http_status, {"error": http_error_message}.
// A 5xx other than an HttpError is logged at error level with `where`
// (e.g. "GET /api/v1/model") and the exception's own message.
HttpAnswer error_answer(const std::exception& e, const std::string& where);

// {"error": message} as JSON text.
std::string error_body(const std::string& message);

}  // namespace isohypse
