#include "isohypse/stages/verify.hpp"

#include <mutex>
#include <string>

#include "isohypse/base/error.hpp"
#include "isohypse/stages/observed.hpp"
#include "stages/verify/episodes.hpp"
#include "stages/verify/false_alarms.hpp"
#include "stages/verify/guidance_archive.hpp"
#include "stages/verify/lead_scores.hpp"
#include "stages/verify/month_bias.hpp"
#include "stages/verify/raw_versus_calibrated.hpp"
#include "stages/verify/report_document.hpp"
#include "stages/verify/verification_cases.hpp"
#include "stages/verify/window_products.hpp"
#include "stages/verify/window_scores.hpp"

namespace isohypse {

namespace {

[[noreturn]] void bad_setting(const std::string& what) { throw InputError("verify: " + what); }

// The observed regime of every day: from the files given, else the model's own record.
ObservedSequence observed_labels(const RegimeModel& model, const VerifyConfig& config) {
  return config.observed.empty()
             ? observed_from_model(model)
             : observed_from_files(model, config.observed, config.variable, config.from, config.to);
}

}  // namespace

BlockLength BlockLength::parse(const std::string& text) {
  if (text == "auto") return {true, 0};
  const bool whole = !text.empty() && text.size() <= 6 && text.find_first_not_of("0123456789") == std::string::npos;
  if (!whole || std::stoi(text) < 1)
    bad_setting("block length '" + text + "' (--block-days) must be a whole number of days >= 1 or 'auto'");
  return {false, std::stoi(text)};
}

std::string BlockLength::to_string() const {
  return automatic ? "auto" : days > 0 ? std::to_string(days) : "lag+7";
}

void VerifyConfig::validate() const {
  if (guidance.empty()) bad_setting("guidance: no guidance files, folders or globs given (--guidance)");
  if (from && to && days_between(*from, *to) < 0)
    bad_setting("from " + to_string(*from) + " is after to " + to_string(*to) + " (--from, --to)");
  if (bootstrap_resamples < 10)
    bad_setting("bootstrap_resamples " + std::to_string(bootstrap_resamples) +
                ": at least 10 are needed (--bootstrap)");
  if (block_length.days < 0)
    bad_setting("block length " + std::to_string(block_length.days) + " days: at least 1 (--block-days)");
  if (windows.empty()) bad_setting("windows: no lead windows (--windows)");
  for (const auto& [first, last] : windows)
    if (first < 0 || last < first)
      bad_setting("windows: " + std::to_string(first) + "-" + std::to_string(last) +
                  " is not a lead range FIRST-LAST with 0 <= FIRST <= LAST (--windows)");
  if (!(confidence > 0 && confidence < 1))
    bad_setting("confidence " + std::to_string(confidence) + " must lie between 0 and 1 (exclusive)");
  if (min_episode_days < 1)
    bad_setting("min_episode_days " + std::to_string(min_episode_days) + ": an episode lasts at least 1 day");
  if (!(catch_margin >= 0 && catch_margin <= 1))
    bad_setting("catch_margin " + std::to_string(catch_margin) + " must lie in 0..1 (--catch-margin)");
  if (!(catch_excess >= 0 && catch_excess <= 1))
    bad_setting("catch_excess " + std::to_string(catch_excess) + " must lie in 0..1 (--catch-excess)");
  if (reliability_bins < 2)
    bad_setting("reliability_bins " + std::to_string(reliability_bins) +
                ": the Brier decomposition and reliability diagram need at least 2 bins (--bins)");
}

nlohmann::json verify_guidance(const RegimeModel& model, const VerifyConfig& config) {
  std::mutex unshared;
  return verify_guidance(model, config, unshared);
}

nlohmann::json verify_guidance(const RegimeModel& model, const VerifyConfig& config, std::mutex& read_lock) {
  using namespace verification;
  config.validate();
  const StateClimatology climatology = state_climatology(model, config.all_months);
  const GuidanceSet guidance = load_guidance(model, climatology.states, config.guidance);
  const ObservedSequence observed = [&] {
    std::lock_guard lock(read_lock);  // the only netCDF reading of verify
    return observed_labels(model, config);
  }();
  const Cases cases = build_cases(guidance, observed, climatology.states.size(), config, model.months);
  require_reference_months(climatology, cases, model.path);
  Findings found;
  found.by_lead = scores_by_lead(cases, climatology, config);
  found.windows = scores_by_window(cases, climatology, config);
  found.by_month = frequency_bias_by_month(cases, climatology.states);
  found.window_products = score_window_products(guidance, observed, model, climatology, config, model.months);
  found.raw_versus_calibrated =
      raw_versus_calibrated(guidance, cases, climatology, config,
                            compare_window_products(guidance, observed, model, climatology, config, model.months));
  const CatchRule rule{config.catch_margin, config.catch_excess, climatology};
  found.episodes = find_episodes(model, climatology, cases, guidance, config.min_episode_days, rule);
  found.false_alarms = find_false_alarms(climatology, guidance, cases, config.min_episode_days, rule);
  return report_document(model, config, climatology, guidance, observed.source, cases, found);
}

}  // namespace isohypse
