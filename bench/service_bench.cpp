// Throughput and latency of GET /api/v1/guidance/latest: 8 concurrent
// keep-alive clients over loopback, for 5 s or 20,000 requests, whichever
// comes first. Against a server given by --url, or one started in-process
// from --model and --guidance (a guidance JSON written by classify with that
// model; it is put into a temporary archive).
//
//   service_bench --model m.nc --guidance g.json [--clients 8] [--seconds 5] [--requests 20000]
//   service_bench --url http://127.0.0.1:8642
#include <httplib.h>
#include <spdlog/spdlog.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <memory>
#include <thread>
#include <unistd.h>
#include <vector>

#include "isohypse/service/archive.hpp"
#include "isohypse/base/atomic_file.hpp"
#include "isohypse/service/service.hpp"

namespace fs = std::filesystem;
using Clock = std::chrono::steady_clock;

int main(int argc, char** argv) {
  std::string url, model, guidance;
  int clients = 8, requests = 20000;
  double seconds = 5;
  for (int i = 1; i + 1 < argc; i += 2) {
    const std::string a = argv[i], v = argv[i + 1];
    if (a == "--url") url = v;
    else if (a == "--model") model = v;
    else if (a == "--guidance") guidance = v;
    else if (a == "--clients") clients = std::stoi(v);
    else if (a == "--seconds") seconds = std::stod(v);
    else if (a == "--requests") requests = std::stoi(v);
    else {
      std::fprintf(stderr, "unknown option %s\n", a.c_str());
      return 1;
    }
  }
  std::unique_ptr<isohypse::Service> service;
  const fs::path tmp = fs::temp_directory_path() / ("isohypse-service-bench-" + std::to_string(::getpid()));
  if (url.empty()) {
    if (model.empty() || guidance.empty()) {
      std::fprintf(stderr, "usage: service_bench (--url URL | --model MODEL --guidance GUIDANCE.json)\n");
      return 1;
    }
    spdlog::set_level(spdlog::level::warn);  // a log line per request would measure the terminal
    isohypse::ServiceConfig cfg;
    cfg.model = model;
    cfg.inbox = (tmp / "inbox").string();
    cfg.archive = (tmp / "archive").string();
    cfg.listen = "127.0.0.1:0";
    cfg.poll_seconds = 3600;
    isohypse::GuidanceArchive(cfg.archive).store(nlohmann::json::parse(isohypse::read_file(guidance)));
    service = std::make_unique<isohypse::Service>(cfg);
    url = "http://127.0.0.1:" + std::to_string(service->start());
  }

  std::atomic<int> issued{0}, failed{0};
  std::vector<std::vector<double>> latency(clients);
  std::size_t bytes = 0;
  const auto t0 = Clock::now(), deadline = t0 + std::chrono::duration_cast<Clock::duration>(std::chrono::duration<double>(seconds));
  std::vector<std::thread> threads;
  for (int c = 0; c < clients; ++c)
    threads.emplace_back([&, c] {
      httplib::Client cli(url);
      cli.set_keep_alive(true);
      cli.set_tcp_nodelay(true);
      while (Clock::now() < deadline && issued.fetch_add(1) < requests) {
        const auto a = Clock::now();
        auto res = cli.Get("/api/v1/guidance/latest");
        latency[c].push_back(std::chrono::duration<double, std::milli>(Clock::now() - a).count());
        if (!res || res->status != 200) ++failed;
        else if (c == 0) bytes = res->body.size();
      }
    });
  for (auto& t : threads) t.join();
  const double elapsed = std::chrono::duration<double>(Clock::now() - t0).count();
  std::vector<double> all;
  for (const auto& l : latency) all.insert(all.end(), l.begin(), l.end());
  std::sort(all.begin(), all.end());
  auto pct = [&](double q) { return all.empty() ? 0.0 : all[std::min(all.size() - 1, static_cast<std::size_t>(q * all.size()))]; };
  std::printf("GET /api/v1/guidance/latest (%zu bytes), %d clients, %s\n", bytes, clients, url.c_str());
  std::printf("requests %zu in %.2f s, failed %d\n", all.size(), elapsed, failed.load());
  std::printf("throughput %.0f requests/s\n", all.size() / elapsed);
  std::printf("latency ms: p50 %.2f  p90 %.2f  p99 %.2f  max %.2f\n", pct(0.5), pct(0.9), pct(0.99),
              all.empty() ? 0.0 : all.back());
  if (service) service->stop();
  std::error_code ec;
  fs::remove_all(tmp, ec);
  return failed.load() == 0 ? 0 : 1;
}
