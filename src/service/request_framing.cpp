#include "service/request_framing.hpp"

#include <algorithm>
#include <cctype>
#include <string_view>

#include "service/request_gate.hpp"

namespace isohypse {

namespace {

constexpr std::size_t kMaxChunkLine = 1024;

FramingResult refusal(int status, std::string message) { return {status, std::move(message), false, 0}; }

// Printable, bounded text of the client's bytes for a message.
std::string shown(std::string_view s) {
  std::string o = "'";
  for (char c : s.substr(0, 40)) o += (c >= 0x20 && c < 0x7f) ? c : '?';
  return o + (s.size() > 40 ? "...'" : "'");
}

std::string_view trimmed(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t' || s.back() == '\r')) s.remove_suffix(1);
  return s;
}

std::string lower(std::string_view s) {
  std::string o(s);
  for (char& c : o) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return o;
}

bool all_of(std::string_view s, int (*is)(int)) {
  return !s.empty() && std::all_of(s.begin(), s.end(), [is](char c) { return is(static_cast<unsigned char>(c)); });
}

std::string bytes(std::size_t n) { return std::to_string(n) + " bytes"; }

}  // namespace

FramingResult RequestFraming::advance(const std::string& in, const GateLimits& limits) {
  if (state_ == State::Head) {
    FramingResult r = head(in, limits);
    if (r.status || state_ == State::Head) return r;
  }
  if (state_ == State::Length) {
    if (in.size() - pos_ < length_) return {};
    state_ = State::Done;
    pos_ += length_;
  }
  if (state_ != State::Done) return chunks(in, limits);
  return {0, {}, true, pos_};
}

FramingResult RequestFraming::head(const std::string& in, const GateLimits& limits) {
  const std::size_t from = scanned_ >= 3 ? scanned_ - 3 : 0;
  const std::size_t end = in.find("\r\n\r\n", from);
  const std::size_t upto = end == std::string::npos ? in.size() : end + 2;
  // The line ends not yet counted; the head's end may lie before what was searched (its last bytes were there).
  if (upto > scanned_)
    lines_ += static_cast<std::size_t>(std::count(in.begin() + static_cast<std::ptrdiff_t>(scanned_),
                                                  in.begin() + static_cast<std::ptrdiff_t>(upto), '\n'));
  scanned_ = std::max(scanned_, upto);
  const std::size_t first_line = in.find('\n');
  if ((first_line == std::string::npos ? in.size() : first_line) > limits.max_request_line)
    return refusal(414, "the request line exceeds " + bytes(limits.max_request_line));
  if (upto > limits.max_head_bytes)
    return refusal(431, "the request head (request line and headers) exceeds " + bytes(limits.max_head_bytes));
  if (lines_ > limits.max_header_lines + 1)
    return refusal(431, "the request has more than " + std::to_string(limits.max_header_lines) + " header lines");
  if (end == std::string::npos) return {};
  pos_ = end + 4;
  return body_framing(in.substr(0, end + 2), limits);
}

// The body's length from the head's Content-Length and Transfer-Encoding.
FramingResult RequestFraming::body_framing(const std::string& head_text, const GateLimits& limits) {
  std::string length_text, coding;
  bool has_length = false, has_coding = false;
  std::size_t at = head_text.find('\n') + 1;  // past the request line
  while (at < head_text.size()) {
    std::size_t eol = head_text.find('\n', at);
    if (eol == std::string::npos) eol = head_text.size();
    const std::string_view line(head_text.data() + at, eol - at);
    at = eol + 1;
    const std::size_t colon = line.find(':');
    if (colon == std::string_view::npos) continue;  // httplib skips such a line too
    const std::string name = lower(trimmed(line.substr(0, colon)));
    const std::string_view value = trimmed(line.substr(colon + 1));
    if (name == "content-length") {
      if (!all_of(value, isdigit) || value.size() > 18 || (has_length && value != length_text))
        return refusal(400, "Content-Length must be one whole number of bytes, got " + shown(value));
      has_length = true;
      length_text = value;
    } else if (name == "transfer-encoding") {
      coding += (has_coding ? "," : "") + lower(value);
      has_coding = true;
    } else if (name == "expect") {
      expect_continue_ = lower(value) == "100-continue";
    }
  }
  if (has_coding && has_length) return refusal(400, "a request may not have both Transfer-Encoding and Content-Length");
  if (has_coding && coding != "chunked")
    return refusal(501, "only Transfer-Encoding: chunked is accepted, got " + shown(coding));
  if (has_coding) {
    state_ = State::ChunkSize;
    return {};
  }
  length_ = has_length ? std::stoull(length_text) : 0;  // neither: no body (RFC 9112, 6.3)
  if (length_ > limits.max_body_bytes)
    return refusal(413, "the body of " + bytes(length_) + " exceeds the limit of " + bytes(limits.max_body_bytes));
  state_ = State::Length;
  return {};
}

FramingResult RequestFraming::chunks(const std::string& in, const GateLimits& limits) {
  for (;;) {
    if (state_ == State::ChunkData) {
      if (in.size() - pos_ < length_ + 2) return {};
      if (in.compare(pos_ + length_, 2, "\r\n") != 0) return refusal(400, "a chunk's data is not followed by CRLF");
      body_bytes_ += length_;
      pos_ += length_ + 2;
      state_ = State::ChunkSize;
      continue;
    }
    const std::size_t eol = in.find("\r\n", pos_);
    const std::size_t line_limit = state_ == State::Trailer ? limits.max_head_bytes : kMaxChunkLine;
    if (eol == std::string::npos)
      return in.size() - pos_ > line_limit ? refusal(400, "a chunk size or trailer line is too long") : FramingResult{};
    const std::string_view line(in.data() + pos_, eol - pos_);
    pos_ = eol + 2;
    if (state_ == State::Trailer) {
      if (!line.empty()) continue;  // a trailer field, dropped
      state_ = State::Done;
      return {0, {}, true, pos_};
    }
    const std::string_view size_text = trimmed(line.substr(0, line.find(';')));
    if (!all_of(size_text, isxdigit) || size_text.size() > 15)
      return refusal(400, "a chunk size must be hexadecimal, got " + shown(line));
    length_ = std::stoull(std::string(size_text), nullptr, 16);
    if (length_ > limits.max_body_bytes - std::min(body_bytes_, limits.max_body_bytes))
      return refusal(413, "the chunked body exceeds the limit of " + bytes(limits.max_body_bytes));
    if (++chunk_count_ > limits.max_chunks)
      return refusal(413, "the chunked body has more than " + std::to_string(limits.max_chunks) + " chunks");
    state_ = length_ == 0 ? State::Trailer : State::ChunkData;
  }
}

}  // namespace isohypse
