// The service's worker: one thread that polls the inbox and runs each
// initialisation that became ready, and the runs asked for by POST
// /api/v1/runs, one at a time.
//
//   a run:  check the files (bad -> quarantine) | classify the lagged
//           ensemble (issue date = the initialisation's) | archive
//           (atomic) | move the inputs to processed/
//
// netCDF-C is not thread-safe: every inbox and classification call holds the
// service's netCDF mutex, which verification takes too.
#pragma once

#include <atomic>
#include <condition_variable>
#include <deque>
#include <future>
#include <memory>
#include <mutex>
#include <nlohmann/json.hpp>
#include <string>
#include <thread>
#include <vector>

#include "isohypse/numerics/regime_model.hpp"
#include "isohypse/service/archive.hpp"
#include "isohypse/service/inbox.hpp"
#include "isohypse/service/service_config.hpp"
#include "service/http_errors.hpp"

namespace isohypse {

class Worker {
public:
  // Keeps references to everything; they must outlive the worker.
  Worker(const ServiceConfig& config, const RegimeModel& model, Inbox& inbox, GuidanceArchive& archive,
         std::mutex& netcdf);
  ~Worker();  // stops

  // Starts the thread (once).
  void start();
  // Lets the run in progress finish, answers runs still waiting with 503,
  // joins the thread. Safe to call more than once.
  void stop();

  // Queues a run of the named inbox files (plain names, already checked to
  // be in the inbox); the answer comes when it is done: 200 with {"runs",
  // "rejected"} when every file was classified and archived, 422 with an
  // "error" too when not, or an error answer (http_errors.hpp). Throws
  // HttpError 503 when the worker is stopping.
  std::future<HttpAnswer> submit(std::vector<std::string> files);

  // For /health: {"run_in_progress": bool, "last_run": summary or null}.
  nlohmann::json status() const;
  // Bumped on every archive write (keys the verification cache).
  unsigned generation() const { return generation_.load(); }

private:
  struct Job {
    std::vector<std::string> files;
    std::promise<HttpAnswer> done;
  };
  struct Run;  // one initialisation's run under way: its summary and clock
  void loop();
  bool next_job(std::chrono::steady_clock::time_point until, std::shared_ptr<Job>& job);
  void poll_inbox();
  HttpAnswer run_job(const std::vector<std::string>& files);
  nlohmann::json run_group(const InboxGroup& group);
  nlohmann::json classify_group(const InboxGroup& group);
  nlohmann::json finish(Run& run, const std::string& outcome, const std::string& message);
  void answer_waiting_jobs();

  const ServiceConfig& config_;
  const RegimeModel& model_;
  Inbox& inbox_;
  GuidanceArchive& archive_;
  std::mutex& netcdf_;

  std::mutex jobs_mutex_;
  std::condition_variable jobs_cv_;
  std::deque<std::shared_ptr<Job>> jobs_;
  bool stopping_ = false;
  std::thread thread_;

  mutable std::mutex status_mutex_;
  nlohmann::json last_run_;
  std::atomic<bool> running_{false};
  std::atomic<unsigned> generation_{0};
};

}  // namespace isohypse
