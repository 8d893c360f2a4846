// The service's own connection layer in front of cpp-httplib. Debian's
// cpp-httplib 0.11.4 is a compiled library whose request reading has no
// bound on header size or count (a header line grows until its newline),
// reads chunked bodies and bodies of a POST without a length whole
// (set_payload_max_length covers only a Content-Length), takes a
// Content-Length of -5 for 2^64 - 5 and then waits for that many bytes, and
// applies its timeout per read, so a client sending one header line every
// few seconds holds a worker thread for as long as it likes. The limits
// cannot be compiled in: the packaged header declares, the library defines.
//
// So GatedServer takes each accepted socket from httplib (it overrides the
// library's process_and_close_socket, and its task queue hands the socket
// over on the accept thread) and one gate thread reads every connection's
// request with poll(), without a thread per client:
//
//   head     request line <= 8 KiB (else 414), whole head <= 16 KiB and
//            <= 100 header lines (else 431)
//   length   Content-Length digits only (else 400 at once: -5, 1e3, two
//            different values), not above the body limit (else 413 at once);
//            Transfer-Encoding only "chunked" (else 501) and never with a
//            Content-Length (400); chunked bodies counted as they arrive,
//            refused with 413 at the first byte past the limit (the same
//            limit as a Content-Length), at most 1024 chunks; no length and
//            not chunked: no body (RFC 9112 section 6.3)
//   deadline the whole request (head and body) within the deadline from its
//            first byte, else 408; an idle kept-alive connection is closed
//            after keep_alive_seconds
//   clients  at most max_connections open at once (else 503 at once)
//
// Only a complete request goes to a worker thread, which hands httplib a
// stream over the bytes already read (and end of stream after them), so a
// handler never waits for a client; its answer is written within the
// deadline too. A refusal is answered by the gate ({"error": ...} with the
// limit in words), the connection is shut for writing and what the client
// still sends is read and dropped for up to 2 s, so that it sees the answer
// rather than a reset.
#pragma once

#include <httplib.h>

#include <cstddef>
#include <memory>

namespace isohypse {

struct GateLimits {
  std::size_t max_request_line = 8 * 1024;
  std::size_t max_head_bytes = 16 * 1024;
  std::size_t max_header_lines = 100;
  std::size_t max_body_bytes = 64 * 1024;
  std::size_t max_chunks = 1024;
  std::size_t max_connections = 256;
  int deadline_seconds = 10;     // a whole request, and a whole answer
  int keep_alive_seconds = 2;    // idle between requests
  int keep_alive_max_count = 1000;
  int threads = 16;              // workers running handlers
};

class RequestGate;

class GatedServer : public httplib::Server {
public:
  explicit GatedServer(const GateLimits& limits);
  ~GatedServer() override;

  // Stops the gate and its workers after the listening loop ended (also done
  // by the destructor); safe to call more than once.
  void stop_gate();

  // Runs one complete request held in `bytes` on socket `fd` through
  // httplib's request processing (routing, handlers, logger), its answer
  // written within deadline_seconds; `continued`: the gate already answered
  // "Expect: 100-continue". Returns true when the connection may stay open.
  // For the gate's workers.
  bool serve_request(int fd, const std::string& bytes, bool last, int deadline_seconds, bool continued);

private:
  bool process_and_close_socket(socket_t sock) override;  // hands the socket to the gate
  std::unique_ptr<RequestGate> gate_;
};

}  // namespace isohypse
