#include "stages/verify/report_document.hpp"

#include <algorithm>
#include <map>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/block_bootstrap.hpp"
#include "stages/verify/case_scores.hpp"

namespace isohypse::verification {

namespace {

using json = nlohmann::json;

std::string date_of(std::int64_t day) { return to_string(from_day_number(day, Calendar::ProlepticGregorian)); }

json regimes_json(const RegimeModel& model, const StateClimatology& climatology, const FalseAlarms& false_alarms) {
  json regimes = json::array();
  for (int r = 0; r < model.k(); ++r)
    regimes.push_back({{"id", climatology.states[r]},
                       {"name", model.regimes[r].name},
                       {"climatological_frequency", climatology.frequency(r)},
                       {"false_alarms", false_alarms.by_regime.at(static_cast<std::size_t>(r))}});
  return regimes;
}

json guidance_json(const GuidanceSet& guidance) {
  std::vector<Date> issues;
  for (const auto& issue : guidance.issues) issues.push_back(issue.issue);
  return {{"files", guidance.issues.size()},
          {"first_issue", to_string(*std::min_element(issues.begin(), issues.end()))},
          {"last_issue", to_string(*std::max_element(issues.begin(), issues.end()))}};
}

json episodes_json(const Findings& found, const VerifyConfig& config) {
  return {{"min_days", config.min_episode_days},
          {"catch_margin", config.catch_margin},
          {"catch_excess", config.catch_excess},
          {"caught", found.episodes.caught},
          {"missed", found.episodes.missed},
          {"not_scored", {{"under_way_at_start", found.episodes.under_way},
                          {"no_issue_before_onset", found.episodes.unseen}}},
          {"list", found.episodes.list},
          {"false_alarms", found.false_alarms.count},
          {"false_alarm_list", found.false_alarms.list}};
}

// The observed states of the period, and each issue's most likely state by
// lead: the sequence chart of the report page.
json sequence_json(const StateClimatology& climatology, const GuidanceSet& guidance, const Cases& cases) {
  json observed = json::array();
  for (const auto& [day, state] : cases.observed) observed.push_back({date_of(day), climatology.states[state]});
  json most_likely = json::array();
  for (const auto& issue : guidance.issues) {
    json row = json::array();
    for (const auto& d : issue.daily) row.push_back({d.lead, climatology.states[d.most_likely]});
    most_likely.push_back({{"issue_date", to_string(issue.issue)}, {"most_likely", row}});
  }
  return {{"observed", observed}, {"guidance", most_likely}};
}

// How the intervals were made; each interval carries its own block_days and blocks.
json bootstrap_json(const VerifyConfig& config, const Cases& cases) {
  return {{"resamples", config.bootstrap_resamples},
          {"confidence", config.confidence},
          {"blocks", "moving blocks of consecutive issue dates (Kuensch 1989)"},
          {"block_days", config.block_length.to_string()},
          {"lag_span_days", cases.lag_span_days},
          {"min_blocks", kMinBootstrapBlocks},
          {"seed", config.seed}};
}

// The monthly references of --all-months, for the months of the cases
// scored: {"source", "months": {"4": {"record_days", "frequency": per state}}}.
json monthly_climatology_json(const StateClimatology& climatology, const Cases& cases) {
  std::map<int, json> months;
  for (const Case& c : cases.list)
    if (!months.count(c.month)) {
      const arma::vec& f = climatology.reference(c.month);
      months[c.month] = {{"record_days", climatology.monthly_days.at(static_cast<std::size_t>(c.month - 1))},
                         {"frequency", std::vector<double>(f.begin(), f.end())}};
    }
  json by_month = json::object();
  for (const auto& [month, entry] : months) by_month[std::to_string(month)] = entry;
  return {{"source", "every day of the calendar month in the regime model's record, in season or not"},
          {"months", by_month}};
}

}  // namespace

json report_document(const RegimeModel& model, const VerifyConfig& config, const StateClimatology& climatology,
                     const GuidanceSet& guidance, const std::string& observations_source, const Cases& cases,
                     const Findings& found) {
  if (guidance.issues.empty() || cases.list.empty())
    throw InternalError("verify: a report without guidance or cases");
  const arma::vec& clim = climatology.frequency;
  json rep;
  rep["format"] = "isohypse-verification";
  rep["format_version"] = 1;
  rep["caution"] = kCaution;
  rep["period"] = {{"from", date_of(cases.first_valid)}, {"to", date_of(cases.last_valid)}};
  rep["states"] = climatology.states;
  rep["regimes"] = regimes_json(model, climatology, found.false_alarms);
  rep["climatology"] = json(std::vector<double>(clim.begin(), clim.end()));
  rep["guidance"] = guidance_json(guidance);
  rep["observations"] = {{"source", observations_source}, {"files", config.observed}};
  rep["cases"] = cases.list.size();
  json outside = json::object();
  std::size_t outside_total = 0;
  for (const auto& [month, n] : cases.out_of_season) {
    outside[std::to_string(month)] = n;
    outside_total += n;
  }
  rep["out_of_season"] = {{"season_months", model.months}, {"cases", outside_total}, {"by_month", outside}};
  // What the out-of-season count means: left out (the default) or scored (--all-months).
  rep["season_filter"] = climatology.by_month() ? "all months, monthly climatology" : "model season";
  if (climatology.by_month()) rep["monthly_climatology"] = monthly_climatology_json(climatology, cases);
  rep["by_lead"] = found.by_lead;
  rep["windows"] = found.windows;
  rep["window_products"] = found.window_products;
  if (!found.raw_versus_calibrated.is_null()) rep["raw_versus_calibrated"] = found.raw_versus_calibrated;
  rep["frequency_bias_by_month"] = found.by_month;
  rep["episodes"] = episodes_json(found, config);
  rep["sequence"] = sequence_json(climatology, guidance, cases);
  rep["reliability"] = {{"bins", config.reliability_bins},
                        {"decomposition", "BS = REL - RES + UNC + WBV - WBC (Stephenson, Coelho & Jolliffe 2008)"},
                        {"consistency_bars", {{"resamples", kConsistencyResamples}, {"level", config.confidence},
                                              {"source", "Broecker & Smith 2007"}}}};
  rep["bootstrap"] = bootstrap_json(config, cases);
  rep["provenance"] = {{"tool", "isohypse"}, {"version", ISOHYPSE_VERSION}, {"created", utc_timestamp_now()},
                       {"model", {{"path", model.path}, {"sha256", model.sha256}}}};
  return rep;
}

}  // namespace isohypse::verification
