#include "stages/verify/case_scores.hpp"

#include <map>

#include "isohypse/base/error.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/block_bootstrap.hpp"
#include "isohypse/numerics/scores.hpp"
#include "stages/verify/block_interval.hpp"

namespace isohypse::verification {

namespace {

using json = nlohmann::json;

json num(double x) { return number_or_null(x); }

// The issue day of each case: its cases travel together in the bootstrap's blocks.
std::vector<std::int64_t> issue_days(const Cases& cases, const std::vector<std::size_t>& idx) {
  std::vector<std::int64_t> days;
  for (auto i : idx) days.push_back(cases.list[i].issue_day);
  return days;
}

// Block length in days for the cases idx: as configured, the lag span + 7
// by default (overlapping issues share initialisations for the span, and a
// week more keeps the flow's own persistence), or Wilks (1997) from the
// per-issue hit rate, which is defined for every issue with a case.
int block_days_for(const Cases& cases, const std::vector<std::size_t>& idx, const BlockLength& rule) {
  if (!rule.automatic) return rule.days > 0 ? rule.days : cases.lag_span_days + 7;
  std::map<std::int64_t, std::pair<double, double>> hits_of_day;  // hits, cases
  for (auto i : idx) {
    auto& [hits, n] = hits_of_day[cases.list[i].issue_day];
    hits += cases.list[i].most_likely == cases.list[i].observed;
    n += 1;
  }
  std::vector<std::int64_t> days;
  std::vector<double> rate;
  for (const auto& [day, hn] : hits_of_day) {
    days.push_back(day);
    rate.push_back(hn.first / hn.second);
  }
  return wilks_block_days(days, rate);
}

}  // namespace

HeadlineScores headline_scores(const Cases& cases, const std::vector<std::size_t>& idx,
                               const StateClimatology& climatology) {
  const std::size_t n_states = climatology.states.size();
  HeadlineScores b;
  b.n = idx.size();
  if (idx.empty()) return b;
  std::vector<int> fc, ob;
  double hits = 0, mcbs = 0, mcbs_clim = 0;
  for (auto i : idx) {
    const Case& c = cases.list[i];
    if (c.p.n_elem != n_states)
      throw InternalError("verify: a case with " + std::to_string(c.p.n_elem) + " probabilities for " +
                          std::to_string(n_states) + " states");
    fc.push_back(c.most_likely);
    ob.push_back(c.observed);
    hits += c.most_likely == c.observed;
    mcbs += multicategory_brier(c.p.t(), c.observed);
    mcbs_clim += multicategory_brier(climatology.reference(c.month).t(), c.observed);
  }
  b.hit_rate = hits / double(idx.size());
  b.heidke = heidke_skill(contingency(fc, ob, static_cast<int>(n_states)));
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
  // A hit rate lies in [0, 1], a skill score at most 1: the symmetric t interval is clamped there.
  const StatisticRange range =
      which == Headline::HitRate ? StatisticRange{0.0, 1.0} : StatisticRange{.highest = 1.0};
  return block_interval_json(issue_days(cases, idx), block_days_for(cases, idx, config.block_length), statistic, config,
                             range);
}

json state_scores_json(const Cases& cases, const std::vector<std::size_t>& idx, const StateClimatology& climatology,
                       const VerifyConfig& config, bool resample) {
  const int bins = config.reliability_bins;
  const std::vector<std::string>& states = climatology.states;
  json out = json::object();
  for (std::size_t s = 0; s < states.size(); ++s) {
    arma::vec p(idx.size()), o(idx.size()), pc(idx.size());
    std::vector<std::int64_t> valid(idx.size());  // the cases of one valid date share its observed outcome
    for (std::size_t j = 0; j < idx.size(); ++j) {
      const Case& c = cases.list[idx[j]];
      valid[j] = c.valid;
      p(j) = c.p(s);
      o(j) = c.observed == static_cast<int>(s) ? 1.0 : 0.0;
      pc(j) = climatology.reference(c.month)(s);  // the season's frequency, or the valid month's (--all-months)
    }
    BrierParts parts = binned_brier_decomposition(p, o, bins);
    double bs_clim = brier_score(pc, o);
    out[states[s]] = {{"brier", parts.brier},           {"reliability", parts.reliability},
                      {"resolution", parts.resolution}, {"uncertainty", parts.uncertainty},
                      {"within_bin_variance", parts.within_bin_variance},
                      {"within_bin_covariance", parts.within_bin_covariance},
                      {"base_rate", parts.base_rate},   {"brier_skill", num(skill_score(parts.brier, bs_clim))},
                      {"roc_area", num(roc_area(p, o))}};
    const ReliabilityFloor floor = reliable_reliability(p, bins, resample ? kConsistencyResamples : 0,
                                                        config.confidence, config.seed + s, valid);
    out[states[s]]["reliability_sampling_mean"] = floor.mean;
    out[states[s]]["reliability_beyond_sampling"] = parts.reliability - floor.mean;  // Ferro & Fricker (2012)
    if (resample) out[states[s]]["reliability_sampling_upper"] = floor.upper;
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
  return reliability_bins_json(p, o, config);
}

json reliability_bins_json(const arma::vec& p, const arma::vec& o, const VerifyConfig& config) {
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
  const auto K = static_cast<int>(states.size());
  std::vector<int> most_likely, observed;
  arma::vec expected(states.size(), arma::fill::zeros);
  for (auto i : idx) {
    most_likely.push_back(cases.list[i].most_likely);
    observed.push_back(cases.list[i].observed);
    expected += cases.list[i].p;
  }
  json out = json::object();
  if (idx.empty()) return out;
  // The categorical bias of ../shared/METHODS.md §6, B_k = n_k. / n_.k, from
  // the table of the most likely state against the observed one.
  const arma::umat table = contingency(most_likely, observed, K);
  const arma::vec bias = frequency_bias(table);
  for (int s = 0; s < K; ++s) {
    const double fc = static_cast<double>(arma::accu(table.row(s)));
    const double ob = static_cast<double>(arma::accu(table.col(s)));
    out[states[s]] = {{"most_likely_days", fc},
                      {"observed_days", ob},
                      {"bias", num(bias(s))},
                      {"expected_days", expected(s)},
                      {"probability_bias", num(ob > 0 ? expected(s) / ob : NAN)}};
  }
  return out;
}

}  // namespace isohypse::verification
