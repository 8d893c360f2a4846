#include "stages/verify/raw_versus_calibrated.hpp"

#include "isohypse/base/vocabulary.hpp"
#include "stages/verify/block_interval.hpp"
#include "stages/verify/case_scores.hpp"

namespace isohypse::verification {

namespace {

using json = nlohmann::json;

// The scores of one version of the probabilities over the cases idx, from the
// same functions as the report's headline scores.
json version_json(const Cases& cases, const std::vector<std::size_t>& idx, const StateClimatology& climatology,
                  const VerifyConfig& config) {
  const HeadlineScores b = headline_scores(cases, idx, climatology);
  double reliability = 0;
  const json by_state = state_scores_json(cases, idx, climatology, config, false);
  for (const auto& [state, scores] : by_state.items()) reliability += scores["reliability"].get<double>();
  return {{"hit_rate", number_or_null(b.hit_rate)},
          {"multicategory_brier", number_or_null(b.brier)},
          {"multicategory_brier_skill", headline_interval(cases, idx, climatology, Headline::BrierSkill, config)},
          {"reliability", number_or_null(reliability)}};
}

// Calibrated minus raw skill, resampled together: the same blocks of issue
// dates for both, so that their shared cases cancel out of the spread.
json skill_difference(const Cases& raw, const Cases& calibrated, const std::vector<std::size_t>& idx,
                      const StateClimatology& climatology, const VerifyConfig& config, int block_days) {
  auto statistic = [&](const std::vector<std::size_t>& pick) {
    std::vector<std::size_t> sub;
    for (auto j : pick) sub.push_back(idx[j]);
    return headline_scores(calibrated, sub, climatology).brier_skill -
           headline_scores(raw, sub, climatology).brier_skill;
  };
  std::vector<std::int64_t> days;
  for (auto i : idx) days.push_back(calibrated.list[i].issue_day);
  return block_interval_json(days, block_days, statistic, config, StatisticRange{});
}

json windows_json(const Cases& raw, const Cases& calibrated, const StateClimatology& climatology,
                  const VerifyConfig& config) {
  json windows = json::array();
  for (const auto& [first, last] : config.windows) {
    const std::vector<std::size_t> idx =
        cases_where(calibrated, [first, last](const Case& c) { return c.lead >= first && c.lead <= last; });
    if (idx.empty()) continue;
    json entry = {{"first_lead_days", first},
                  {"last_lead_days", last},
                  {"cases", idx.size()},
                  {"raw", version_json(raw, idx, climatology, config)},
                  {"calibrated", version_json(calibrated, idx, climatology, config)}};
    const int block_days = entry["calibrated"]["multicategory_brier_skill"]["block_days"].get<int>();
    entry["skill_difference"] = skill_difference(raw, calibrated, idx, climatology, config, block_days);
    windows.push_back(entry);
  }
  return windows;
}

}  // namespace

Cases calibrated_issue_cases(const Cases& cases, bool raw) {
  Cases out = cases;
  out.list.clear();
  for (const Case& c : cases.list) {
    if (c.raw_p.is_empty()) continue;
    out.list.push_back(c);
    if (raw) {
      out.list.back().p = c.raw_p;
      out.list.back().most_likely = c.raw_most_likely;
    }
  }
  return out;
}

json raw_versus_calibrated(const GuidanceSet& guidance, const Cases& cases, const StateClimatology& climatology,
                           const VerifyConfig& config, const json& window_products) {
  std::size_t calibrated_issues = 0;
  for (const auto& issue : guidance.issues) calibrated_issues += issue.calibrated;
  if (calibrated_issues == 0) return nullptr;
  const Cases raw = calibrated_issue_cases(cases, true), calibrated = calibrated_issue_cases(cases, false);
  return {{"issues", {{"calibrated", calibrated_issues}, {"raw", guidance.issues.size() - calibrated_issues}}},
          {"headline",
           "the report's other scores use each issue's headline probabilities: the calibrated ones of a calibrated "
           "issue, the raw ones of an issue without calibration; this comparison uses the calibrated issues only, "
           "their raw and calibrated probabilities over the same cases"},
          {"windows", windows_json(raw, calibrated, climatology, config)},
          {"window_products", window_products}};
}

}  // namespace isohypse::verification
