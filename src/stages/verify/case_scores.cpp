#include "stages/verify/case_scores.hpp"

#include "isohypse/base/error.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/scores.hpp"

namespace isohypse::verification {

namespace {

using json = nlohmann::json;

json num(double x) { return number_or_null(x); }

// The issue of each case: the bootstrap's blocks (leads of one issue are correlated).
std::vector<int> issue_blocks(const Cases& cases, const std::vector<std::size_t>& idx) {
  std::vector<int> blocks;
  for (auto i : idx) blocks.push_back(cases.list[i].issue);
  return blocks;
}

}  // namespace

HeadlineScores headline_scores(const Cases& cases, const std::vector<std::size_t>& idx,
                               const StateClimatology& climatology) {
  const arma::vec& clim = climatology.frequency;
  HeadlineScores b;
  b.n = idx.size();
  if (idx.empty()) return b;
  std::vector<int> fc, ob;
  double hits = 0, mcbs = 0, mcbs_clim = 0;
  for (auto i : idx) {
    const Case& c = cases.list[i];
    if (c.p.n_elem != clim.n_elem)
      throw InternalError("verify: a case with " + std::to_string(c.p.n_elem) + " probabilities for " +
                          std::to_string(clim.n_elem) + " states");
    fc.push_back(c.most_likely);
    ob.push_back(c.observed);
    hits += c.most_likely == c.observed;
    mcbs += multicategory_brier(c.p.t(), c.observed);
    mcbs_clim += multicategory_brier(clim.t(), c.observed);
  }
  b.hit_rate = hits / double(idx.size());
  b.heidke = heidke_skill(contingency(fc, ob, static_cast<int>(clim.n_elem)));
  b.brier = mcbs / double(idx.size());
  b.brier_skill = skill_score(b.brier, mcbs_clim / double(idx.size()));
  return b;
}

json headline_interval(const Cases& cases, const std::vector<std::size_t>& idx, const StateClimatology& climatology,
                       Headline which, const VerifyConfig& config) {
  auto statistic = [&](const std::vector<std::size_t>& pick) {
    std::vector<std::size_t> sub;
    for (auto j : pick) sub.push_back(idx[j]);
    HeadlineScores b = headline_scores(cases, sub, climatology);
    return which == Headline::HitRate ? b.hit_rate : which == Headline::Heidke ? b.heidke : b.brier_skill;
  };
  Interval ci = block_bootstrap(issue_blocks(cases, idx), statistic, config.bootstrap_resamples, config.confidence,
                                config.seed);
  return json{{"estimate", num(ci.estimate)}, {"lower", num(ci.lower)}, {"upper", num(ci.upper)}};
}

json state_scores_json(const Cases& cases, const std::vector<std::size_t>& idx, const StateClimatology& climatology,
                       int bins) {
  const std::vector<std::string>& states = climatology.states;
  json out = json::object();
  for (std::size_t s = 0; s < states.size(); ++s) {
    arma::vec p(idx.size()), o(idx.size());
    for (std::size_t j = 0; j < idx.size(); ++j) {
      p(j) = cases.list[idx[j]].p(s);
      o(j) = cases.list[idx[j]].observed == static_cast<int>(s) ? 1.0 : 0.0;
    }
    BrierParts parts = binned_brier_decomposition(p, o, bins);
    arma::vec pc(idx.size());
    pc.fill(climatology.frequency(s));
    double bs_clim = brier_score(pc, o);
    out[states[s]] = {{"brier", parts.brier},           {"reliability", parts.reliability},
                      {"resolution", parts.resolution}, {"uncertainty", parts.uncertainty},
                      {"within_bin_variance", parts.within_bin_variance},
                      {"within_bin_covariance", parts.within_bin_covariance},
                      {"base_rate", parts.base_rate},   {"brier_skill", num(skill_score(parts.brier, bs_clim))},
                      {"roc_area", num(roc_area(p, o))}};
  }
  return out;
}

json reliability_json(const Cases& cases, const std::vector<std::size_t>& idx, std::size_t n_states,
                      const VerifyConfig& config) {
  arma::vec p(idx.size() * n_states), o(idx.size() * n_states);
  std::size_t j = 0;
  for (auto i : idx)
    for (std::size_t s = 0; s < n_states; ++s, ++j) {
      p(j) = cases.list[i].p(s);
      o(j) = cases.list[i].observed == static_cast<int>(s);
    }
  json bins = json::array();
  for (const auto& b : reliability_diagram_with_bars(p, o, config.reliability_bins, kConsistencyResamples,
                                                     config.confidence, config.seed))
    bins.push_back({{"lower", b.lower}, {"upper", b.upper}, {"mean_forecast", num(b.mean_forecast)},
                    {"observed_frequency", num(b.observed_frequency)}, {"count", b.count},
                    {"consistency_lower", num(b.bar_lower)}, {"consistency_upper", num(b.bar_upper)}});
  return bins;
}

json frequency_bias_json(const Cases& cases, const std::vector<std::size_t>& idx,
                         const std::vector<std::string>& states) {
  arma::vec fc(states.size(), arma::fill::zeros), ob(states.size(), arma::fill::zeros);
  for (auto i : idx) {
    fc += cases.list[i].p;
    ob(cases.list[i].observed) += 1;
  }
  json out = json::object();
  for (std::size_t s = 0; s < states.size(); ++s)
    out[states[s]] = {
        {"forecast_days", fc(s)}, {"observed_days", ob(s)}, {"bias", num(ob(s) > 0 ? fc(s) / ob(s) : NAN)}};
  return out;
}

}  // namespace isohypse::verification
