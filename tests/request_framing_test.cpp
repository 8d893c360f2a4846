// Where a request ends and which limit it breaks (src/service/request_framing.hpp),
// fed at once and one byte at a time.
#include <doctest/doctest.h>

#include <string>

#include "service/request_framing.hpp"
#include "service/request_gate.hpp"

using namespace isohypse;

namespace {

GateLimits small_limits() {
  GateLimits l;
  l.max_body_bytes = 100;
  l.max_head_bytes = 200;
  l.max_request_line = 60;
  l.max_header_lines = 5;
  l.max_chunks = 4;
  return l;
}

// The result after the whole of `text` arrived at once.
FramingResult at_once(const std::string& text, const GateLimits& limits = small_limits()) {
  RequestFraming f;
  return f.advance(text, limits);
}

// The result after `text` arrived one byte at a time (the first refusal or completion ends it).
FramingResult byte_by_byte(const std::string& text, const GateLimits& limits = small_limits()) {
  RequestFraming f;
  std::string in;
  FramingResult r;
  for (char c : text) {
    in += c;
    r = f.advance(in, limits);
    if (r.status || r.complete) return r;
  }
  return r;
}

const std::string kGet = "GET /health HTTP/1.1\r\nHost: x\r\n\r\n";

}  // namespace

TEST_CASE("request framing: a request without a body ends after its head") {
  for (auto r : {at_once(kGet + "GET /next"), byte_by_byte(kGet + "GET /next")}) {
    CHECK(r.status == 0);
    CHECK(r.complete);
    CHECK(r.end == kGet.size());
  }
}

TEST_CASE("request framing: a Content-Length body is waited for and ends the request") {
  const std::string req = "POST /api/v1/runs HTTP/1.1\r\nContent-Length: 5\r\n\r\nhello";
  CHECK_FALSE(at_once(req.substr(0, req.size() - 1)).complete);
  for (auto r : {at_once(req + "GET"), byte_by_byte(req)}) {
    CHECK(r.complete);
    CHECK(r.end == req.size());
  }
}

TEST_CASE("request framing: a chunked body with extensions and a trailer") {
  const std::string req =
      "POST /x HTTP/1.1\r\ntransfer-encoding:  Chunked \r\n\r\n3;ext=1\r\nabc\r\nA\r\n0123456789\r\n0\r\nX-T: 1\r\n\r\n";
  for (auto r : {at_once(req + "GET"), byte_by_byte(req)}) {
    CHECK(r.status == 0);
    CHECK(r.complete);
    CHECK(r.end == req.size());
  }
}

TEST_CASE("request framing: bad and excessive lengths are refused as soon as the head is there") {
  CHECK(at_once("POST / HTTP/1.1\r\nContent-Length: -5\r\n\r\n").status == 400);
  CHECK(at_once("POST / HTTP/1.1\r\nContent-Length: 1e3\r\n\r\n").status == 400);
  CHECK(at_once("POST / HTTP/1.1\r\nContent-Length: 5\r\nContent-Length: 6\r\n\r\n").status == 400);
  CHECK(at_once("POST / HTTP/1.1\r\nContent-Length: 5\r\nContent-Length: 5\r\n\r\nhello").complete);
  CHECK(at_once("POST / HTTP/1.1\r\nContent-Length: 99999999999999999999999\r\n\r\n").status == 400);
  CHECK(at_once("POST / HTTP/1.1\r\nContent-Length: 101\r\n\r\n").status == 413);
  CHECK(at_once("POST / HTTP/1.1\r\nContent-Length: 100\r\n\r\n").status == 0);
  CHECK(at_once("POST / HTTP/1.1\r\nTransfer-Encoding: gzip, chunked\r\n\r\n").status == 501);
  CHECK(at_once("POST / HTTP/1.1\r\nTransfer-Encoding: chunked\r\nContent-Length: 3\r\n\r\n").status == 400);
}

TEST_CASE("request framing: a chunked body is refused at the first chunk past the limit") {
  const std::string head = "POST / HTTP/1.1\r\nTransfer-Encoding: chunked\r\n\r\n";
  const std::string fifty = "32\r\n" + std::string(50, 'x') + "\r\n";
  CHECK(at_once(head + fifty + fifty + "0\r\n\r\n").complete);       // exactly the limit
  const FramingResult over = at_once(head + fifty + fifty + "1\r\n");  // the size line alone is enough
  CHECK(over.status == 413);
  CHECK(at_once(head + "fffffffffffffff\r\n").status == 413);
  CHECK(at_once(head + "1\r\na\r\n1\r\na\r\n1\r\na\r\n1\r\na\r\n1\r\n").status == 413);  // more than 4 chunks
  CHECK(at_once(head + "zz\r\n").status == 400);
  CHECK(at_once(head + "1\r\nab\r\n").status == 400);  // data longer than its size
  CHECK(at_once(head + std::string(2000, '1')).status == 400);
}

TEST_CASE("request framing: heads too long or with too many lines") {
  CHECK(byte_by_byte("GET /" + std::string(100, 'a')).status == 414);
  CHECK(byte_by_byte("GET / HTTP/1.1\r\nX: " + std::string(300, 'a')).status == 431);
  std::string many = "GET / HTTP/1.1\r\n";
  for (int i = 0; i < 6; ++i) many += "X" + std::to_string(i) + ": v\r\n";
  CHECK(at_once(many + "\r\n").status == 431);
  CHECK(byte_by_byte(many).status == 431);  // counted before the head ends
  std::string five = "GET / HTTP/1.1\r\n";
  for (int i = 0; i < 5; ++i) five += "X" + std::to_string(i) + ": v\r\n";
  CHECK(at_once(five + "\r\n").complete);
}

TEST_CASE("request framing: Expect 100-continue is seen once the head is there") {
  RequestFraming f;
  const std::string head = "POST / HTTP/1.1\r\nExpect: 100-continue\r\nContent-Length: 3\r\n\r\n";
  CHECK_FALSE(f.advance(head.substr(0, 20), small_limits()).complete);
  CHECK_FALSE(f.expects_continue());
  CHECK_FALSE(f.advance(head, small_limits()).complete);
  CHECK(f.expects_continue());
  CHECK(f.advance(head + "abc", small_limits()).complete);
}
