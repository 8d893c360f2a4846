#include "service/worker.hpp"

#include <spdlog/spdlog.h>

#include <chrono>
#include <cmath>
#include <filesystem>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/stages/classify.hpp"

namespace isohypse {

namespace fs = std::filesystem;
using json = nlohmann::json;
using Clock = std::chrono::steady_clock;

struct Worker::Run {
  Clock::time_point started = Clock::now();
  std::string date;
  json summary;  // for the log, /health and the POST answer

  explicit Run(const InboxGroup& g) : date(g.date), summary{{"initialisation", g.date}, {"files", json::array()}} {
    for (const auto& f : g.files) summary["files"].push_back(fs::path(f).filename().string());
  }
};

Worker::Worker(const ServiceConfig& config, const RegimeModel& model, Inbox& inbox, GuidanceArchive& archive,
               std::mutex& netcdf)
    : config_(config), model_(model), inbox_(inbox), archive_(archive), netcdf_(netcdf) {}

Worker::~Worker() { stop(); }

void Worker::start() {
  if (!thread_.joinable()) thread_ = std::thread([this] { loop(); });
}

void Worker::stop() {
  {
    std::lock_guard lock(jobs_mutex_);
    stopping_ = true;
  }
  jobs_cv_.notify_all();
  if (thread_.joinable()) thread_.join();
}

std::future<HttpAnswer> Worker::submit(std::vector<std::string> files) {
  auto job = std::make_shared<Job>();
  job->files = std::move(files);
  auto answer = job->done.get_future();
  {
    std::lock_guard lock(jobs_mutex_);
    if (stopping_) throw HttpError(503, "the service is stopping");
    jobs_.push_back(job);
  }
  jobs_cv_.notify_all();
  return answer;
}

json Worker::status() const {
  std::lock_guard lock(status_mutex_);
  return {{"run_in_progress", running_.load()}, {"last_run", last_run_}};
}

// ---------------------------------------------------------------- the loop

void Worker::loop() {
  auto next_poll = Clock::now();
  for (;;) {
    std::shared_ptr<Job> job;
    if (!next_job(next_poll, job)) break;
    running_ = true;
    try {
      if (job) {
        job->done.set_value(run_job(job->files));
      } else {
        poll_inbox();
        next_poll = Clock::now() + std::chrono::duration_cast<Clock::duration>(
                                       std::chrono::duration<double>(config_.poll_seconds));
      }
    } catch (const std::exception& e) {
      spdlog::error("worker: {}", e.what());  // the service carries on
    }
    running_ = false;
  }
  answer_waiting_jobs();
}

// Waits for a run asked for (into `job`) or until the poll is due (job empty); false when stopping.
bool Worker::next_job(Clock::time_point until, std::shared_ptr<Job>& job) {
  std::unique_lock lock(jobs_mutex_);
  jobs_cv_.wait_until(lock, until, [&] { return stopping_ || !jobs_.empty(); });
  if (stopping_) return false;
  if (!jobs_.empty()) {
    job = jobs_.front();
    jobs_.pop_front();
  }
  return true;
}

void Worker::poll_inbox() {
  std::vector<InboxGroup> ready;
  {
    std::lock_guard lock(netcdf_);
    ready = inbox_.poll();
  }
  for (const auto& g : ready) run_group(g);
}

void Worker::answer_waiting_jobs() {
  // Tell waiting clients rather than leave them hanging.
  std::lock_guard lock(jobs_mutex_);
  for (auto& j : jobs_) j->done.set_value({503, error_body("the service stopped before the run")});
  jobs_.clear();
}

// ---------------------------------------------------------------- runs

HttpAnswer Worker::run_job(const std::vector<std::string>& files) {
  try {
    std::vector<std::pair<std::string, std::string>> rejected;
    std::vector<InboxGroup> groups;
    {
      std::lock_guard lock(netcdf_);
      try {
        groups = inbox_.group(files, rejected);
      } catch (const InputError& e) {
        throw HttpError(404, e.what());  // the file left the inbox after the request was checked
      }
    }
    json runs = json::array();
    bool all_issued = rejected.empty();
    for (const auto& g : groups) {
      runs.push_back(run_group(g));
      all_issued = all_issued && runs.back()["outcome"] == "issued";
    }
    json body = {{"runs", runs}, {"rejected", json::array()}};
    for (const auto& [name, why] : rejected) body["rejected"].push_back({{"file", name}, {"reason", why}});
    if (!all_issued) body["error"] = "not every file could be classified (see runs and rejected)";
    return {all_issued ? 200 : 422, body.dump()};
  } catch (const std::exception& e) {
    return error_answer(e, "run");
  }
}

// One initialisation: check, classify, archive, move. Returns its summary.
json Worker::run_group(const InboxGroup& g) {
  Run run(g);
  std::lock_guard lock(netcdf_);
  std::vector<std::string> waiting;
  const auto bad = inbox_.check(g, model_.grid, waiting);
  if (!bad.empty()) {
    run.summary["quarantined"] = json::array();
    for (const auto& [name, why] : bad) run.summary["quarantined"].push_back({{"file", name}, {"reason", why}});
    return finish(run, "quarantined",
                  std::to_string(bad.size()) + " unreadable file(s) moved to quarantine; the rest wait");
  }
  if (!waiting.empty()) {
    run.summary["waiting"] = waiting;
    return finish(run, "waiting",
                  std::to_string(waiting.size()) + " file(s) cannot be read yet and are still changing; tried again");
  }
  json guidance;
  try {
    guidance = classify_group(g);
  } catch (const Error& e) {
    // The files read alone but not together (duplicate members, mixed grids): keep them out of later runs.
    for (const auto& f : g.files) inbox_.quarantine(f, std::string("classification failed: ") + e.what());
    return finish(run, "quarantined", std::string("classification failed: ") + e.what());
  }
  try {
    archive_.store(guidance);
  } catch (const Error& e) {
    // A full disk: the archive is as it was and the files stay in the inbox for the next poll.
    return finish(run, "failed", std::string("cannot write the guidance: ") + e.what());
  }
  ++generation_;
  inbox_.mark_processed(g);
  run.summary["issue_date"] = g.date;
  run.summary["href"] = "/api/v1/guidance/" + g.date;
  return finish(run, "issued", "guidance from " + std::to_string(guidance["ensemble"]["members"].get<int>()) +
                                   " members of " + std::to_string(guidance["ensemble"]["lag"].get<int>()) +
                                   " initialisation(s)");
}

// The group with the processed initialisations before it (the lagged ensemble), issued on its date.
json Worker::classify_group(const InboxGroup& g) {
  ClassifyConfig cc = config_.classify_options();
  cc.forecasts = inbox_.processed_before(g.date, config_.lag > 0 ? config_.lag - 1 : 0);
  cc.forecasts.insert(cc.forecasts.end(), g.files.begin(), g.files.end());
  cc.issue_date = parse_date(g.date, Calendar::ProlepticGregorian, "issue date");
  try {
    return classify_forecasts(model_, cc);
  } catch (const Error& e) {
    // The observed files also give the latest observed regime and its age; when they cannot (unreadable,
    // another grid), the guidance goes out without it.
    if (cc.analysis.empty()) throw;
    spdlog::warn("run {}: observed files not usable for the observed regime ({}); classifying without them", g.date,
                 e.what());
    cc.analysis.clear();
    return classify_forecasts(model_, cc);
  }
}

json Worker::finish(Run& run, const std::string& outcome, const std::string& message) {
  const double ms = std::chrono::duration<double, std::milli>(Clock::now() - run.started).count();
  run.summary["outcome"] = outcome;
  run.summary["message"] = message;
  run.summary["ms"] = std::round(ms);
  if (outcome == "issued") spdlog::info("run {}: {} in {:.0f} ms", run.date, message, ms);
  else spdlog::warn("run {}: {}: {} ({:.0f} ms)", run.date, outcome, message, ms);
  std::lock_guard lock(status_mutex_);
  last_run_ = run.summary;
  return run.summary;
}

}  // namespace isohypse
