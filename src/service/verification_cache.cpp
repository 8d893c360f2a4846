#include "service/verification_cache.hpp"

#include <spdlog/spdlog.h>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/stopwatch.hpp"
#include "isohypse/stages/verify.hpp"

namespace isohypse {

namespace {

constexpr std::size_t kMaxAnswers = 64;  // then the cache starts again: ranges asked for are few
constexpr int kMaxQueued = 2;            // one running, one waiting; more are answered 503

}  // namespace

VerificationCache::VerificationCache(const ServiceConfig& config, const RegimeModel& model,
                                     const GuidanceArchive& archive, std::mutex& netcdf)
    : config_(config), model_(model), archive_(archive), netcdf_(netcdf) {}

HttpAnswer VerificationCache::answer(const VerificationRange& range, unsigned generation) {
  // No issue after the last valid date can have a valid date in the range.
  std::string last_issue = range.issued_to;
  if (!range.to.empty() && (last_issue.empty() || range.to < last_issue)) last_issue = range.to;
  const std::vector<std::string> dates = archive_.dates(range.issued_from, last_issue);
  if (dates.empty())
    throw HttpError(404, "no guidance issued between " + (range.issued_from.empty() ? "(start)" : range.issued_from) +
                             " and " + (last_issue.empty() ? "(end)" : last_issue));
  const std::string key = range.from + "|" + range.to + "|" + range.issued_from + "|" + range.issued_to + "|" +
                          (range.all_months ? "all" : "season") + "|" + std::to_string(generation);
  if (auto kept = cached(key)) return *kept;
  // One verification at a time, and at most one more waiting for its turn: each holds an HTTP thread, and the
  // runs must not crowd out classification's reading.
  struct Queued {
    std::atomic<int>& n;
    ~Queued() { --n; }
  } queued{queued_};
  if (++queued_ > kMaxQueued)
    throw HttpError(503, "a verification is already running and another is waiting; retry in a few seconds");
  std::lock_guard turn(running_);
  if (auto kept = cached(key)) return *kept;  // computed while this one waited
  HttpAnswer result = verify(dates, range);
  std::lock_guard lock(mutex_);
  if (answers_.size() > kMaxAnswers) answers_.clear();
  answers_[key] = result;
  return result;
}

std::optional<HttpAnswer> VerificationCache::cached(const std::string& key) {
  std::lock_guard lock(mutex_);
  if (auto it = answers_.find(key); it != answers_.end()) return it->second;
  return std::nullopt;
}

HttpAnswer VerificationCache::verify(const std::vector<std::string>& dates, const VerificationRange& range) {
  VerifyConfig vc = config_.verify_options();
  for (const auto& d : dates) vc.guidance.push_back(archive_.path_of(d));
  if (!range.from.empty()) vc.from = parse_date(range.from, Calendar::ProlepticGregorian, "from");
  if (!range.to.empty()) vc.to = parse_date(range.to, Calendar::ProlepticGregorian, "to");
  vc.all_months = range.all_months;
  const Stopwatch clock;
  HttpAnswer answer;
  try {
    // netCDF-C is not thread-safe: the service's lock is held only while the observed files are read.
    answer = {200, verify_guidance(model_, vc, netcdf_).dump()};
  } catch (const Error& e) {
    // The archive is there but cannot be verified: the same answer until the archive changes.
    answer = error_answer(e, "verification");
  }
  spdlog::info("verification of {} issue(s) ({} to {}): {} in {:.0f} ms", dates.size(), dates.front(), dates.back(),
               answer.status, clock.total() * 1000);
  return answer;
}

}  // namespace isohypse
