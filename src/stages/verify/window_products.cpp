#include "stages/verify/window_products.hpp"

#include <algorithm>
#include <cmath>
#include <functional>
#include <limits>
#include <map>
#include <string>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/block_bootstrap.hpp"
#include "isohypse/numerics/scores.hpp"
#include "stages/verify/block_interval.hpp"
#include "stages/verify/case_scores.hpp"
#include "stages/verify/window_outcomes.hpp"

namespace isohypse::verification {

namespace {

using json = nlohmann::json;

json num(double x) { return number_or_null(x); }

// One window of one issue that can be scored.
struct WindowCase {
  std::int64_t issue_day = 0;  // day number of the issue date (the bootstrap's blocks)
  arma::vec dominance;         // forecast, per state
  arma::vec expected_days;     // forecast, per state
  WindowOutcome observed;
  arma::vec raw_dominance, raw_expected_days;  // a calibrated issue's raw products; empty otherwise
};

// Windows counted but not scored, by reason.
struct LeftOut {
  std::size_t partly_outside_period = 0, outside_season = 0, not_observed = 0, no_member_covers = 0;
};

// Every window of one (first, last) lead range.
struct WindowGroup {
  int first = 0, last = 0;
  std::size_t windows = 0;  // with a valid day in the period
  std::vector<WindowCase> cases;
  LeftOut left_out;
  int lag_span_days = 1;    // the longest lag span of the issues scored
};

using Statistic = std::function<double(const std::vector<std::size_t>&)>;

// The counter in left_out of the first reason the window cannot be scored
// (the checks in the order of the header), or nullptr when it can.
std::size_t* reason_left_out(const WindowGuidance& w, const std::map<std::int64_t, int>& observed,
                             const std::vector<int>& season_months, LeftOut& left_out, std::int64_t from,
                             std::int64_t to) {
  const std::int64_t first = day_number(w.from), last = day_number(w.to);
  if (first < from || last > to) return &left_out.partly_outside_period;
  for (std::int64_t d = first; d <= last; ++d) {
    const int month = from_day_number(d, Calendar::ProlepticGregorian).month;
    if (!season_months.empty() &&
        std::find(season_months.begin(), season_months.end(), month) == season_months.end())
      return &left_out.outside_season;
  }
  for (std::int64_t d = first; d <= last; ++d)
    if (!observed.count(d)) return &left_out.not_observed;
  if (w.dominance.is_empty()) return &left_out.no_member_covers;
  return nullptr;
}

// The windows of the guidance grouped by lead range, each paired with what was observed.
std::map<std::pair<int, int>, WindowGroup> collect_windows(const GuidanceSet& guidance,
                                                           const std::map<std::int64_t, int>& observed,
                                                           std::size_t n_states, const VerifyConfig& config,
                                                           const std::vector<int>& season_months) {
  const std::int64_t from = config.from ? day_number(*config.from) : std::numeric_limits<std::int64_t>::min();
  const std::int64_t to = config.to ? day_number(*config.to) : std::numeric_limits<std::int64_t>::max();
  std::map<std::pair<int, int>, WindowGroup> groups;
  for (const GuidanceIssue& issue : guidance.issues)
    for (const WindowGuidance& w : issue.windows) {
      if (day_number(w.to) < from || day_number(w.from) > to) continue;  // wholly outside the period
      WindowGroup& g = groups[{w.first_lead, w.last_lead}];
      g.first = w.first_lead;
      g.last = w.last_lead;
      ++g.windows;
      if (std::size_t* reason = reason_left_out(w, observed, season_months, g.left_out, from, to)) {
        ++*reason;
        continue;
      }
      std::vector<int> labels;
      for (std::int64_t d = day_number(w.from); d <= day_number(w.to); ++d) labels.push_back(observed.at(d));
      g.cases.push_back({day_number(issue.issue), w.dominance, w.expected_days, observed_window(labels, n_states),
                         w.raw_dominance, w.raw_expected_days});
      g.lag_span_days = std::max(g.lag_span_days, issue.lag_span_days);
    }
  return groups;
}

// {"estimate", "lower", "upper", "block_days", "blocks"[, "note"]} of a
// statistic of the cases idx (indices into cases), from moving blocks of
// consecutive issue dates as the daily intervals (case_scores.hpp): the
// configured block length, the lag span + 7 days by default, or Wilks
// (1997) from the statistic of each issue alone. Both statistics are skill
// scores, so the interval ends at 1 at most.
json window_interval(const std::vector<WindowCase>& cases, const std::vector<std::size_t>& idx, const Statistic& stat,
                     const VerifyConfig& config, int lag_span_days) {
  if (idx.empty()) return {{"estimate", nullptr}, {"lower", nullptr}, {"upper", nullptr}, {"note", "no case"}};
  std::vector<std::int64_t> issue_days;
  for (auto i : idx) issue_days.push_back(cases[i].issue_day);
  int block_days = config.block_length.days > 0 ? config.block_length.days : lag_span_days + 7;
  if (config.block_length.automatic) {
    std::map<std::int64_t, std::vector<std::size_t>> of_day;  // one window per issue, unless issues share a date
    for (auto i : idx) of_day[cases[i].issue_day].push_back(i);
    std::vector<std::int64_t> days;
    std::vector<double> score;
    for (const auto& [day, members] : of_day) {
      days.push_back(day);
      score.push_back(stat(members));
    }
    block_days = wilks_block_days(days, score);
  }
  auto resampled = [&](const std::vector<std::size_t>& pick) {
    std::vector<std::size_t> sub;
    for (auto j : pick) sub.push_back(idx[j]);
    return stat(sub);
  };
  return block_interval_json(issue_days, block_days, resampled, config, StatisticRange{.highest = 1.0});
}

// Mean multi-category Brier score of the dominance forecasts of cases idx
// (all with a dominant state), or of the climatological probabilities.
double dominance_mcb(const std::vector<WindowCase>& cases, const std::vector<std::size_t>& idx,
                     const arma::vec* climatological = nullptr) {
  if (idx.empty()) return NAN;
  double sum = 0;
  for (auto i : idx)
    sum += multicategory_brier((climatological ? *climatological : cases[i].dominance).t(), cases[i].observed.dominant);
  return sum / static_cast<double>(idx.size());
}

// Per state: the dominance Brier score, its five terms in `bins` bins, ROC
// area and skill against the climatological dominance probability.
json dominance_by_state(const std::vector<WindowCase>& cases, const std::vector<std::size_t>& idx,
                        const arma::vec& clim, const std::vector<std::string>& states, int bins) {
  json out = json::object();
  for (std::size_t s = 0; s < states.size(); ++s) {
    arma::vec p(idx.size()), o(idx.size());
    for (std::size_t j = 0; j < idx.size(); ++j) {
      p(j) = cases[idx[j]].dominance(s);
      o(j) = cases[idx[j]].observed.dominant == static_cast<int>(s) ? 1.0 : 0.0;
    }
    const BrierParts parts = binned_brier_decomposition(p, o, bins);
    const double bs_clim = std::isfinite(clim(s)) ? brier_score(arma::vec(idx.size()).fill(clim(s)), o) : NAN;
    out[states[s]] = {{"brier", parts.brier},
                      {"reliability", parts.reliability},
                      {"resolution", parts.resolution},
                      {"uncertainty", parts.uncertainty},
                      {"within_bin_variance", parts.within_bin_variance},
                      {"within_bin_covariance", parts.within_bin_covariance},
                      {"base_rate", parts.base_rate},
                      {"climatological_probability", num(clim(s))},
                      {"brier_skill", num(skill_score(parts.brier, bs_clim))},
                      {"roc_area", num(roc_area(p, o))}};
  }
  return out;
}

// Reliability diagram of the dominance probabilities of every state pooled.
json dominance_reliability(const std::vector<WindowCase>& cases, const std::vector<std::size_t>& idx,
                           std::size_t n_states, const VerifyConfig& config) {
  arma::vec p(idx.size() * n_states), o(idx.size() * n_states);
  std::size_t j = 0;
  for (auto i : idx)
    for (std::size_t s = 0; s < n_states; ++s, ++j) {
      p(j) = cases[i].dominance(s);
      o(j) = cases[i].observed.dominant == static_cast<int>(s);
    }
  return reliability_bins_json(p, o, config);
}

json dominance_json(const WindowGroup& g, const arma::vec& clim, const std::vector<std::string>& states,
                    const VerifyConfig& config) {
  std::vector<std::size_t> idx;  // the windows with one dominant state
  for (std::size_t i = 0; i < g.cases.size(); ++i)
    if (g.cases[i].observed.dominant != kTiedWindow) idx.push_back(i);
  const bool clim_known = clim.is_finite();
  auto skill = [&](const std::vector<std::size_t>& sub) {
    return clim_known ? skill_score(dominance_mcb(g.cases, sub), dominance_mcb(g.cases, sub, &clim)) : NAN;
  };
  json out{{"cases", idx.size()},
           {"multicategory_brier", num(dominance_mcb(g.cases, idx))},
           {"multicategory_brier_climatology", num(clim_known ? dominance_mcb(g.cases, idx, &clim) : NAN)},
           {"multicategory_brier_skill", window_interval(g.cases, idx, skill, config, g.lag_span_days)},
           {"regimes", json::object()},
           {"reliability", json::array()}};
  if (idx.empty()) return out;
  out["regimes"] = dominance_by_state(g.cases, idx, clim, states, config.reliability_bins);
  out["reliability"] = dominance_reliability(g.cases, idx, states.size(), config);
  return out;
}

// Mean absolute error of the expected days of cases idx against the observed
// days, for state s or (s < 0) over all states; of clim_days when given.
double days_mae(const std::vector<WindowCase>& cases, const std::vector<std::size_t>& idx, int s,
                const arma::vec* clim_days = nullptr) {
  if (idx.empty()) return NAN;
  double sum = 0, n = 0;
  for (auto i : idx) {
    const arma::vec error = arma::abs((clim_days ? *clim_days : cases[i].expected_days) - cases[i].observed.days);
    sum += s < 0 ? arma::accu(error) : error(s);
    n += s < 0 ? static_cast<double>(error.n_elem) : 1.0;
  }
  return sum / n;
}

json expected_days_json(const WindowGroup& g, const arma::vec& clim_days, const std::vector<std::string>& states,
                        const VerifyConfig& config) {
  std::vector<std::size_t> idx(g.cases.size());
  for (std::size_t i = 0; i < idx.size(); ++i) idx[i] = i;
  auto skill = [&](const std::vector<std::size_t>& sub) {
    return skill_score(days_mae(g.cases, sub, -1), days_mae(g.cases, sub, -1, &clim_days));
  };
  json regimes = json::object();
  for (std::size_t s = 0; s < states.size(); ++s) {
    double expected = 0, observed = 0;
    for (const auto& c : g.cases) {
      expected += c.expected_days(s);
      observed += c.observed.days(s);
    }
    const double n = static_cast<double>(g.cases.size());
    const double mae = days_mae(g.cases, idx, static_cast<int>(s));
    const double mae_clim = days_mae(g.cases, idx, static_cast<int>(s), &clim_days);
    regimes[states[s]] = {{"mae", num(mae)},
                          {"mae_climatology", num(mae_clim)},
                          {"skill", num(idx.empty() ? NAN : skill_score(mae, mae_clim))},
                          {"mean_expected_days", num(idx.empty() ? NAN : expected / n)},
                          {"mean_observed_days", num(idx.empty() ? NAN : observed / n)},
                          {"climatological_days", clim_days(s)}};
  }
  return {{"cases", idx.size()},
          {"mae", num(days_mae(g.cases, idx, -1))},
          {"mae_climatology", num(days_mae(g.cases, idx, -1, &clim_days))},
          {"skill", window_interval(g.cases, idx, skill, config, g.lag_span_days)},
          {"regimes", regimes}};
}

json by_state(const std::vector<std::string>& states, const arma::vec& v) {
  json out = json::object();
  for (std::size_t s = 0; s < states.size(); ++s) out[states[s]] = num(v(s));
  return out;
}

json group_json(const WindowGroup& g, const RegimeModel& model, const StateClimatology& climatology,
                const VerifyConfig& config) {
  const int days = g.last - g.first + 1;
  const arma::vec clim_dominance = climatological_dominance(model, days);
  const arma::vec clim_days = static_cast<double>(days) * climatology.frequency;
  std::size_t tied = 0;
  for (const auto& c : g.cases) tied += c.observed.dominant == kTiedWindow;
  return {{"first_lead_days", g.first},
          {"last_lead_days", g.last},
          {"days", days},
          {"windows", g.windows},
          {"cases", g.cases.size()},
          {"tied", tied},
          {"left_out", {{"partly_outside_period", g.left_out.partly_outside_period},
                        {"outside_season", g.left_out.outside_season},
                        {"not_observed", g.left_out.not_observed},
                        {"no_member_covers", g.left_out.no_member_covers}}},
          {"climatology", {{"dominance", by_state(climatology.states, clim_dominance)},
                           {"expected_days", by_state(climatology.states, clim_days)}}},
          {"dominance", dominance_json(g, clim_dominance, climatology.states, config)},
          {"expected_days", expected_days_json(g, clim_days, climatology.states, config)}};
}

// The raw or the calibrated products of one version of a group: the scores
// dominance_json and expected_days_json give the headline.
json version_json(const WindowGroup& v, const arma::vec& clim_dominance, const arma::vec& clim_days,
                  const std::vector<std::string>& states, const VerifyConfig& config) {
  const json d = dominance_json(v, clim_dominance, states, config);
  const json e = expected_days_json(v, clim_days, states, config);
  double reliability = 0;
  for (const auto& [state, scores] : d["regimes"].items()) reliability += scores["reliability"].get<double>();
  return {{"dominance_cases", d["cases"]},
          {"dominance_multicategory_brier", d["multicategory_brier"]},
          {"dominance_multicategory_brier_skill", d["multicategory_brier_skill"]},
          {"dominance_reliability", d["regimes"].empty() ? json(nullptr) : num(reliability)},
          {"expected_days_mae", e["mae"]},
          {"expected_days_skill", e["skill"]}};
}

// The windows of calibrated issues in a group, raw against calibrated; null without any.
json group_versions(const WindowGroup& g, const RegimeModel& model, const StateClimatology& climatology,
                    const VerifyConfig& config) {
  WindowGroup calibrated = g;
  calibrated.cases.clear();
  for (const auto& c : g.cases)
    if (!c.raw_dominance.is_empty() && !c.raw_expected_days.is_empty()) calibrated.cases.push_back(c);
  if (calibrated.cases.empty()) return nullptr;
  WindowGroup raw = calibrated;
  for (auto& c : raw.cases) {
    c.dominance = c.raw_dominance;
    c.expected_days = c.raw_expected_days;
  }
  const int days = g.last - g.first + 1;
  const arma::vec clim_dominance = climatological_dominance(model, days);
  const arma::vec clim_days = static_cast<double>(days) * climatology.frequency;
  return {{"first_lead_days", g.first},
          {"last_lead_days", g.last},
          {"cases", calibrated.cases.size()},
          {"raw", version_json(raw, clim_dominance, clim_days, climatology.states, config)},
          {"calibrated", version_json(calibrated, clim_dominance, clim_days, climatology.states, config)}};
}

std::map<std::int64_t, int> observed_days(const ObservedSequence& observed) {
  std::map<std::int64_t, int> observed_by_day;
  for (std::size_t t = 0; t < observed.dates.size() && t < observed.labels.size(); ++t)
    observed_by_day[day_number(observed.dates[t])] = observed.labels[t];
  return observed_by_day;
}

}  // namespace

json compare_window_products(const GuidanceSet& guidance, const ObservedSequence& observed, const RegimeModel& model,
                             const StateClimatology& climatology, const VerifyConfig& config,
                             const std::vector<int>& season_months) {
  json out = json::array();
  for (const auto& [range, group] :
       collect_windows(guidance, observed_days(observed), climatology.states.size(), config, season_months)) {
    json entry = group_versions(group, model, climatology, config);
    if (!entry.is_null()) out.push_back(entry);
  }
  return out;
}

json score_window_products(const GuidanceSet& guidance, const ObservedSequence& observed, const RegimeModel& model,
                           const StateClimatology& climatology, const VerifyConfig& config,
                           const std::vector<int>& season_months) {
  const std::map<std::int64_t, int> observed_by_day = observed_days(observed);
  std::size_t without = 0;
  for (const auto& issue : guidance.issues) without += issue.windows.empty();
  json windows = json::array();
  for (const auto& [range, group] :
       collect_windows(guidance, observed_by_day, climatology.states.size(), config, season_months))
    windows.push_back(group_json(group, model, climatology, config));
  return {{"windows", windows},
          {"issues_without_windows", without},
          {"definition",
           "dominance: the probability that a state is the most frequent over the window's valid days; a window whose "
           "observed days tie for the most is left out of the dominance scores and counted as tied. Expected days: "
           "the summed daily probabilities against the observed days. References: the climatological dominance "
           "probability over every run of as many consecutive in-season days of the model's record (ties split "
           "equally) and the days length x climatological frequency. A window is scored only when every valid day "
           "is in the period, in the model's season and observed, and some member covers it whole."}};
}

}  // namespace isohypse::verification
