#include "stages/verify/window_scores.hpp"

#include "isohypse/base/vocabulary.hpp"
#include "stages/verify/case_scores.hpp"

namespace isohypse::verification {

nlohmann::json scores_by_window(const Cases& cases, const StateClimatology& climatology, const VerifyConfig& config) {
  nlohmann::json windows = nlohmann::json::array();
  for (const auto& [first, last] : config.windows) {
    const std::vector<std::size_t> idx =
        cases_where(cases, [first, last](const Case& c) { return c.lead >= first && c.lead <= last; });
    if (idx.empty()) continue;
    auto interval = [&](Headline which) { return headline_interval(cases, idx, climatology, which, config); };
    windows.push_back({{"first_lead_days", first},
                       {"last_lead_days", last},
                       {"cases", idx.size()},
                       {"hit_rate", interval(Headline::HitRate)},
                       {"heidke", interval(Headline::Heidke)},
                       {"multicategory_brier", number_or_null(headline_scores(cases, idx, climatology).brier)},
                       {"multicategory_brier_skill", interval(Headline::BrierSkill)},
                       {"regimes", state_scores_json(cases, idx, climatology, config, true)},
                       {"reliability", reliability_json(cases, idx, climatology.states.size(), config)},
                       {"frequency_bias", frequency_bias_json(cases, idx, climatology.states)}});
  }
  return windows;
}

}  // namespace isohypse::verification
