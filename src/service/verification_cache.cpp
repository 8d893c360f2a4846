#include "service/verification_cache.hpp"

#include "isohypse/base/error.hpp"
#include "isohypse/stages/verify.hpp"

namespace isohypse {

namespace {

constexpr std::size_t kMaxAnswers = 64;  // then the cache starts again: ranges asked for are few

}  // namespace

VerificationCache::VerificationCache(const ServiceConfig& config, const RegimeModel& model,
                                     const GuidanceArchive& archive, std::mutex& netcdf)
    : config_(config), model_(model), archive_(archive), netcdf_(netcdf) {}

HttpAnswer VerificationCache::answer(const std::string& from, const std::string& to, unsigned generation) {
  const std::vector<std::string> dates = archive_.dates(from, to);
  if (dates.empty())
    throw HttpError(404, "no guidance issued in " + (from.empty() ? "(start)" : from) + " .. " +
                             (to.empty() ? "(end)" : to));
  const std::string key = from + "|" + to + "|" + std::to_string(generation);
  {
    std::lock_guard lock(mutex_);
    if (auto it = answers_.find(key); it != answers_.end()) return it->second;
  }
  HttpAnswer result = verify(dates);
  std::lock_guard lock(mutex_);
  if (answers_.size() > kMaxAnswers) answers_.clear();
  answers_[key] = result;
  return result;
}

HttpAnswer VerificationCache::verify(const std::vector<std::string>& dates) {
  VerifyConfig vc = config_.verify_options();
  for (const auto& d : dates) vc.guidance.push_back(archive_.path_of(d));
  try {
    std::lock_guard lock(netcdf_);
    return {200, verify_guidance(model_, vc).dump()};
  } catch (const Error& e) {
    // The archive is there but cannot be verified: the same answer until the archive changes.
    return error_answer(e, "verification");
  }
}

}  // namespace isohypse
