#include "service/request_gate.hpp"

#include <arpa/inet.h>
#include <fcntl.h>
#include <netinet/in.h>
#include <netinet/tcp.h>
#include <poll.h>
#include <sys/eventfd.h>
#include <sys/socket.h>
#include <unistd.h>

#include <spdlog/spdlog.h>

#include <algorithm>
#include <chrono>
#include <condition_variable>
#include <cstring>
#include <deque>
#include <map>
#include <mutex>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>
#include <thread>
#include <vector>

#include "service/request_framing.hpp"

namespace isohypse {

namespace {

using Clock = std::chrono::steady_clock;

constexpr auto kLinger = std::chrono::seconds(2);  // reading and dropping after a refusal

void set_nonblocking(int fd) { fcntl(fd, F_SETFL, fcntl(fd, F_GETFL, 0) | O_NONBLOCK); }

std::string address_of(const sockaddr_storage& a) {
  char text[INET6_ADDRSTRLEN] = "?";
  if (a.ss_family == AF_INET) inet_ntop(AF_INET, &reinterpret_cast<const sockaddr_in&>(a).sin_addr, text, sizeof text);
  if (a.ss_family == AF_INET6)
    inet_ntop(AF_INET6, &reinterpret_cast<const sockaddr_in6&>(a).sin6_addr, text, sizeof text);
  return text;
}

int port_of(const sockaddr_storage& a) {
  if (a.ss_family == AF_INET) return ntohs(reinterpret_cast<const sockaddr_in&>(a).sin_port);
  if (a.ss_family == AF_INET6) return ntohs(reinterpret_cast<const sockaddr_in6&>(a).sin6_port);
  return -1;
}

// Writes all of `data` to a non-blocking socket before `deadline`; false on failure or time out.
bool write_until(int fd, const char* data, std::size_t size, Clock::time_point deadline, std::size_t* written) {
  std::size_t done = 0;
  while (done < size) {
    const ssize_t n = ::send(fd, data + done, size - done, MSG_NOSIGNAL);
    if (n > 0) {
      done += static_cast<std::size_t>(n);
      continue;
    }
    if (n < 0 && errno != EAGAIN && errno != EWOULDBLOCK && errno != EINTR) break;
    const auto left = std::chrono::duration_cast<std::chrono::milliseconds>(deadline - Clock::now()).count();
    if (left <= 0) break;
    pollfd p{fd, POLLOUT, 0};
    ::poll(&p, 1, static_cast<int>(std::min<long long>(left, 1000)));
  }
  if (written) *written = done;
  return done == size;
}

// A request the gate read whole, seen by httplib as its connection: the
// bytes, then end of stream; answers go to the socket within the deadline.
class ReadStream : public httplib::Stream {
public:
  // continued: the gate already sent "100 Continue" (httplib would send a second one after the body).
  ReadStream(int fd, const std::string& bytes, Clock::time_point deadline, bool continued)
      : fd_(fd), bytes_(bytes), deadline_(deadline), continued_(continued) {}
  bool is_readable() const override { return pos_ < bytes_.size(); }
  bool is_writable() const override { return Clock::now() < deadline_; }
  ssize_t read(char* ptr, std::size_t size) override {
    const std::size_t n = std::min(size, bytes_.size() - pos_);
    std::memcpy(ptr, bytes_.data() + pos_, n);
    pos_ += n;
    return static_cast<ssize_t>(n);
  }
  ssize_t write(const char* ptr, std::size_t size) override {
    static constexpr std::string_view kContinue = "HTTP/1.1 100 Continue\r\n\r\n";
    if (continued_ && std::string_view(ptr, size) == kContinue) {
      continued_ = false;
      return static_cast<ssize_t>(size);
    }
    std::size_t done = 0;
    const bool all = write_until(fd_, ptr, size, deadline_, &done);
    return all || done > 0 ? static_cast<ssize_t>(done) : -1;
  }
  void get_remote_ip_and_port(std::string& ip, int& port) const override { name(::getpeername, ip, port); }
  void get_local_ip_and_port(std::string& ip, int& port) const override { name(::getsockname, ip, port); }
  socket_t socket() const override { return fd_; }

private:
  void name(int (*get)(int, sockaddr*, socklen_t*), std::string& ip, int& port) const {
    sockaddr_storage a{};
    socklen_t len = sizeof a;
    if (get(fd_, reinterpret_cast<sockaddr*>(&a), &len) != 0) return;
    ip = address_of(a);
    port = port_of(a);
  }
  int fd_;
  const std::string& bytes_;
  std::size_t pos_ = 0;
  Clock::time_point deadline_;
  bool continued_;
};

const char* status_text(int status) {
  switch (status) {
    case 400: return "Bad Request";
    case 408: return "Request Timeout";
    case 413: return "Payload Too Large";
    case 414: return "URI Too Long";
    case 431: return "Request Header Fields Too Large";
    case 501: return "Not Implemented";
    default: return "Service Unavailable";
  }
}

std::string refusal_text(int status, const std::string& message) {
  const std::string body = nlohmann::json{{"error", message}}.dump();
  return "HTTP/1.1 " + std::to_string(status) + " " + status_text(status) +
         "\r\nContent-Type: application/json\r\nConnection: close\r\nContent-Length: " + std::to_string(body.size()) +
         (status == 503 ? "\r\nRetry-After: 5" : "") + "\r\n\r\n" + body;
}

}  // namespace

// ---------------------------------------------------------------- the gate

class RequestGate {
public:
  RequestGate(GatedServer& server, const GateLimits& limits);
  ~RequestGate() { stop(); }
  void adopt(int fd);
  void stop();

private:
  struct Conn {
    int fd = -1;
    std::string peer;
    std::string in;
    RequestFraming framing;
    Clock::time_point since;    // accepted, or the previous answer sent
    Clock::time_point started;  // first byte of the request under way
    Clock::time_point linger_until;
    bool lingering = false;
    bool sent_continue = false;
    bool eof = false;  // the client shut its side: answer what is complete, then close
    int served = 0;
  };
  struct Ready {
    Conn conn;
    std::string request;
    bool continued = false;  // the gate sent "100 Continue" for it
  };
  void loop();
  void take_new();
  bool receive(Conn& c);  // false: the client closed or failed
  bool advance(Conn& c, std::vector<Ready>& ready);  // true: handed to a worker
  void refuse(Conn& c, int status, const std::string& message);
  bool expired(Conn& c, Clock::time_point now);
  void work();
  void finish(Conn c, bool keep);
  void wake();

  GatedServer& server_;
  GateLimits limits_;
  int wake_fd_;
  std::map<int, Conn> conns_;  // gate thread only
  std::mutex mutex_;
  std::vector<Conn> incoming_;  // adopted or kept alive, for the gate thread
  std::deque<Ready> ready_;     // complete requests, for the workers
  std::condition_variable ready_cv_;
  std::size_t open_ = 0;        // connections the gate and the workers hold
  bool stopping_ = false;
  std::thread gate_thread_;
  std::vector<std::thread> workers_;
};

RequestGate::RequestGate(GatedServer& server, const GateLimits& limits)
    : server_(server), limits_(limits), wake_fd_(::eventfd(0, EFD_NONBLOCK | EFD_CLOEXEC)) {
  gate_thread_ = std::thread([this] { loop(); });
  for (int i = 0; i < limits_.threads; ++i) workers_.emplace_back([this] { work(); });
}

void RequestGate::wake() {
  const std::uint64_t one = 1;
  [[maybe_unused]] const ssize_t n = ::write(wake_fd_, &one, sizeof one);
}

void RequestGate::adopt(int fd) {
  set_nonblocking(fd);
  const int one = 1;
  ::setsockopt(fd, IPPROTO_TCP, TCP_NODELAY, &one, sizeof one);  // headers and body go out in separate writes
  Conn c;
  c.fd = fd;
  sockaddr_storage a{};
  socklen_t len = sizeof a;
  if (::getpeername(fd, reinterpret_cast<sockaddr*>(&a), &len) == 0)
    c.peer = address_of(a) + ":" + std::to_string(port_of(a));
  c.since = Clock::now();
  {
    std::lock_guard lock(mutex_);
    if (!stopping_ && open_ < limits_.max_connections) {
      ++open_;
      incoming_.push_back(std::move(c));
      wake();
      return;
    }
  }
  // Too many clients at once: answered here, on the accept thread, without reading.
  const std::string text = refusal_text(503, "too many connections (" + std::to_string(limits_.max_connections) +
                                                 " open); retry shortly");
  [[maybe_unused]] const ssize_t n = ::send(fd, text.data(), text.size(), MSG_NOSIGNAL);
  spdlog::warn("refused 503 to {}: {} connections open", c.peer, limits_.max_connections);
  ::shutdown(fd, SHUT_RDWR);
  ::close(fd);
}

void RequestGate::stop() {
  {
    std::lock_guard lock(mutex_);
    if (stopping_ && !gate_thread_.joinable()) return;
    stopping_ = true;
  }
  wake();
  ready_cv_.notify_all();
  if (gate_thread_.joinable()) gate_thread_.join();
  for (auto& w : workers_)
    if (w.joinable()) w.join();
  workers_.clear();
  std::lock_guard lock(mutex_);
  for (auto& c : incoming_) ::close(c.fd);
  for (auto& r : ready_) ::close(r.conn.fd);
  incoming_.clear();
  ready_.clear();
  if (wake_fd_ >= 0) ::close(wake_fd_);
  wake_fd_ = -1;
}

void RequestGate::take_new() {
  std::uint64_t count = 0;
  [[maybe_unused]] const ssize_t n = ::read(wake_fd_, &count, sizeof count);
  std::lock_guard lock(mutex_);
  for (auto& c : incoming_) conns_[c.fd] = std::move(c);
  incoming_.clear();
}

void RequestGate::loop() {
  std::vector<pollfd> fds;
  std::vector<Ready> ready;
  for (;;) {
    {
      std::lock_guard lock(mutex_);
      if (stopping_) break;
    }
    fds.assign(1, pollfd{wake_fd_, POLLIN, 0});
    for (const auto& [fd, c] : conns_) fds.push_back({fd, POLLIN, 0});
    ::poll(fds.data(), fds.size(), 100);  // at most 100 ms, for the deadlines
    if (fds[0].revents) take_new();
    const auto now = Clock::now();
    for (std::size_t i = 1; i < fds.size(); ++i) {
      auto it = conns_.find(fds[i].fd);
      if (it == conns_.end()) continue;
      Conn& c = it->second;
      const bool open = !fds[i].revents || receive(c);
      if (!open) c.eof = true;
      if (!c.lingering && advance(c, ready)) {
        conns_.erase(it);  // handed to a worker
        continue;
      }
      if (open && !expired(c, now)) continue;
      ::close(c.fd);
      conns_.erase(it);
      std::lock_guard lock(mutex_);
      --open_;
    }
    if (!ready.empty()) {
      std::lock_guard lock(mutex_);
      for (auto& r : ready) {
        conns_.erase(r.conn.fd);
        ready_.push_back(std::move(r));
      }
      ready.clear();
      ready_cv_.notify_all();
    }
  }
  for (auto& [fd, c] : conns_) ::close(fd);
  conns_.clear();
}

// Reads what is there; false when the client closed its side or the connection failed.
bool RequestGate::receive(Conn& c) {
  char buf[16 * 1024];
  // Never hold more than one request's worth: the framing refuses anything longer first.
  const std::size_t cap = limits_.max_head_bytes + 2 * limits_.max_body_bytes + limits_.max_chunks * 16 + sizeof buf;
  // At most 4 reads per turn, so that a client sending as fast as loopback allows (also one that is being
  // refused and keeps sending) cannot keep the gate thread from the others.
  for (int reads = 0; reads < 4; ++reads) {
    const ssize_t n = ::recv(c.fd, buf, sizeof buf, 0);
    if (n == 0) return false;
    if (n < 0) return errno == EAGAIN || errno == EWOULDBLOCK || errno == EINTR;
    if (c.lingering) continue;  // read and dropped
    if (c.in.empty() && c.framing.empty()) c.started = Clock::now();
    c.in.append(buf, static_cast<std::size_t>(n));
    if (c.in.size() >= cap) return true;  // advance() refuses it
  }
  return true;
}

// Frames what arrived. A complete request goes to `ready` (true: the connection is handed over); a refusal is sent
// and the connection lingers.
bool RequestGate::advance(Conn& c, std::vector<Ready>& ready) {
  if (c.in.empty()) return false;
  const FramingResult r = c.framing.advance(c.in, limits_);
  if (r.status != 0) {
    refuse(c, r.status, r.message);
    return false;
  }
  if (!r.complete) {
    if (c.framing.expects_continue() && !c.sent_continue && !c.eof) {
      static const char kContinue[] = "HTTP/1.1 100 Continue\r\n\r\n";
      [[maybe_unused]] const ssize_t n = ::send(c.fd, kContinue, sizeof kContinue - 1, MSG_NOSIGNAL);
      c.sent_continue = true;
    }
    return false;
  }
  Ready req;
  req.request = c.in.substr(0, r.end);
  req.continued = c.sent_continue;
  c.in.erase(0, r.end);
  c.framing = RequestFraming();
  c.sent_continue = false;
  req.conn = std::move(c);
  ready.push_back(std::move(req));
  return true;
}

void RequestGate::refuse(Conn& c, int status, const std::string& message) {
  const std::string text = refusal_text(status, message);
  // One attempt, never a wait: the gate thread serves every connection (a client that reads nothing loses it).
  write_until(c.fd, text.data(), text.size(), Clock::now(), nullptr);
  spdlog::warn("refused {} to {}: {}", status, c.peer, message);
  ::shutdown(c.fd, SHUT_WR);
  c.lingering = true;
  c.linger_until = Clock::now() + kLinger;
  c.in.clear();
  c.in.shrink_to_fit();
}

// True when the connection's time is up: a request past its deadline is refused with 408 (and lingers), an idle
// kept-alive connection is closed quietly.
bool RequestGate::expired(Conn& c, Clock::time_point now) {
  if (c.lingering) return now >= c.linger_until;
  if (!c.in.empty() || !c.framing.empty()) {
    if (now - c.started < std::chrono::seconds(limits_.deadline_seconds)) return false;
    refuse(c, 408,
           "the request was not complete within " + std::to_string(limits_.deadline_seconds) + " s of its first byte");
    return false;
  }
  return now - c.since >= std::chrono::seconds(c.served ? limits_.keep_alive_seconds : limits_.deadline_seconds);
}

void RequestGate::work() {
  for (;;) {
    Ready r;
    {
      std::unique_lock lock(mutex_);
      ready_cv_.wait(lock, [&] { return stopping_ || !ready_.empty(); });
      if (ready_.empty()) return;
      r = std::move(ready_.front());
      ready_.pop_front();
    }
    bool keep = false;
    try {
      const bool last = r.conn.served + 1 >= limits_.keep_alive_max_count;
      keep = server_.serve_request(r.conn.fd, r.request, last, limits_.deadline_seconds, r.continued);
    } catch (const std::exception& e) {
      spdlog::error("request from {}: {}", r.conn.peer, e.what());
    }
    finish(std::move(r.conn), keep);
  }
}

void RequestGate::finish(Conn c, bool keep) {
  std::lock_guard lock(mutex_);
  if (!keep || stopping_ || c.eof) {
    ::shutdown(c.fd, SHUT_RDWR);
    ::close(c.fd);
    --open_;
    return;
  }
  ++c.served;
  c.since = Clock::now();
  c.started = c.since;  // pipelined bytes already there count from now
  incoming_.push_back(std::move(c));
  wake();
}

// ---------------------------------------------------------------- the server

namespace {

// httplib's accept loop hands each socket to its task queue; this one runs the
// task (GatedServer::process_and_close_socket) at once, on the accept thread.
class HandOver : public httplib::TaskQueue {
public:
  explicit HandOver(GatedServer& server) : server_(server) {}
  void enqueue(std::function<void()> fn) override { fn(); }
  void shutdown() override { server_.stop_gate(); }

private:
  GatedServer& server_;
};

}  // namespace

GatedServer::GatedServer(const GateLimits& limits) : gate_(std::make_unique<RequestGate>(*this, limits)) {
  new_task_queue = [this] { return new HandOver(*this); };
  set_payload_max_length(limits.max_body_bytes);  // a second line behind the gate's own count
  set_keep_alive_max_count(static_cast<std::size_t>(limits.keep_alive_max_count));
  set_keep_alive_timeout(limits.keep_alive_seconds);
}

GatedServer::~GatedServer() { stop_gate(); }

void GatedServer::stop_gate() {
  if (gate_) gate_->stop();
}

bool GatedServer::process_and_close_socket(socket_t sock) {
  gate_->adopt(sock);
  return true;
}

bool GatedServer::serve_request(int fd, const std::string& bytes, bool last, int deadline_seconds, bool continued) {
  ReadStream stream(fd, bytes, Clock::now() + std::chrono::seconds(deadline_seconds), continued);
  bool closed = false;
  const bool ok = process_request(stream, last, closed, nullptr);
  return ok && !closed && !last;
}

}  // namespace isohypse
