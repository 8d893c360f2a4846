// Where one HTTP/1.1 request ends in the bytes received so far, and whether
// it keeps the gate's limits (request_gate.hpp): the head's size and line
// count, the body's declared or chunked length. Incremental: each call goes
// on from where the previous one stopped, so a client sending one byte at a
// time costs no more than one sending the request at once.
#pragma once

#include <cstddef>
#include <string>

namespace isohypse {

struct GateLimits;

struct FramingResult {
  int status = 0;        // != 0: refuse with this status and message
  std::string message;
  bool complete = false; // the request is bytes [0, end)
  std::size_t end = 0;
};

class RequestFraming {
public:
  // `in` holds the request's bytes from its first one (more may follow it).
  FramingResult advance(const std::string& in, const GateLimits& limits);
  // Nothing of a request parsed yet.
  bool empty() const { return state_ == State::Head && scanned_ == 0; }
  // The head asked for "Expect: 100-continue" and a body follows.
  bool expects_continue() const { return expect_continue_ && state_ != State::Head; }

private:
  enum class State { Head, Length, ChunkSize, ChunkData, Trailer, Done };
  FramingResult head(const std::string& in, const GateLimits& limits);
  FramingResult body_framing(const std::string& head_text, const GateLimits& limits);
  FramingResult chunks(const std::string& in, const GateLimits& limits);

  State state_ = State::Head;
  std::size_t scanned_ = 0;     // head: bytes searched for its end
  std::size_t lines_ = 0;       // head: line ends among them
  std::size_t pos_ = 0;         // body: next byte to parse
  std::size_t length_ = 0;      // Content-Length, or the chunk being read
  std::size_t body_bytes_ = 0;  // chunked: data so far
  std::size_t chunk_count_ = 0;
  bool expect_continue_ = false;
};

}  // namespace isohypse
