#include "stages/verify/lead_scores.hpp"

#include "isohypse/base/vocabulary.hpp"
#include "stages/verify/case_scores.hpp"

namespace isohypse::verification {

nlohmann::json scores_by_lead(const Cases& cases, const StateClimatology& climatology, const VerifyConfig& config) {
  nlohmann::json by_lead = nlohmann::json::array();
  for (int lead = 0; lead <= cases.max_lead; ++lead) {
    const std::vector<std::size_t> idx = cases_where(cases, [lead](const Case& c) { return c.lead == lead; });
    if (idx.empty()) continue;
    const HeadlineScores b = headline_scores(cases, idx, climatology);
    by_lead.push_back({{"lead_days", lead},
                       {"cases", b.n},
                       {"hit_rate", number_or_null(b.hit_rate)},
                       {"heidke", number_or_null(b.heidke)},
                       {"multicategory_brier", number_or_null(b.brier)},
                       {"multicategory_brier_skill", number_or_null(b.brier_skill)},
                       {"multicategory_brier_skill_interval",
                        headline_interval(cases, idx, climatology, Headline::BrierSkill, config)},
                       {"regimes", state_scores_json(cases, idx, climatology, config, false)}});
  }
  return by_lead;
}

}  // namespace isohypse::verification
