#include "stages/calibrate/calibration_cases.hpp"

#include <algorithm>
#include <map>
#include <set>

#include "isohypse/base/error.hpp"
#include "isohypse/io/reader.hpp"
#include "isohypse/numerics/ensemble_stats.hpp"
#include "isohypse/numerics/state_frequencies.hpp"

namespace isohypse {

namespace {

std::vector<MemberTrack> tracks_of(const ReforecastSet& set, const ReforecastLabels& labels,
                                   const ReforecastIssue& is) {
  std::vector<MemberTrack> tracks;
  for (std::size_t j = 0; j < is.inits.size(); ++j) {
    const std::size_t i = is.inits[j];
    for (std::size_t m = 0; m < labels.labels[i].size(); ++m)
      tracks.push_back({set.inits[i].id(), set.inits[i].members[m].number, is.weights[j], -is.ages[j],
                        labels.labels[i][m]});
  }
  return tracks;
}

bool in_season(const RegimeModel& model, const Date& d) {
  return std::find(model.months.begin(), model.months.end(), d.month) != model.months.end();
}

}  // namespace

ObservedSequence calibration_observed(const RegimeModel& model, const CalibrateConfig& cfg, const ReforecastSet& set) {
  if (cfg.observed.empty()) return observed_from_model(model);
  Date from = set.inits.front().init_real, to = set.inits.front().init_real;
  for (const auto& in : set.inits) {
    from = std::min(from, in.init_real);
    to = std::max(to, in.valid_real(in.n_leads - 1));
  }
  return observed_from_files(model, expand_paths(cfg.observed), cfg.variable, from, to);
}

void check_observed_coverage(const RegimeModel& model, const ReforecastSet& set, const ObservedSequence& observed) {
  std::set<std::int64_t> seen, needed;
  for (const Date& d : observed.dates) seen.insert(day_number(d));
  for (const auto& in : set.inits)
    for (int l = 0; l < in.n_leads; ++l)
      if (in_season(model, in.valid_real(l))) needed.insert(day_number(in.valid_real(l)));
  std::size_t missing = 0;
  std::int64_t first = 0;
  for (std::int64_t d : needed)
    if (!seen.count(d) && missing++ == 0) first = d;
  if (missing * 10 <= needed.size()) return;
  throw InputError("observed (" + observed.source + "): " + std::to_string(missing) + " of the " +
                   std::to_string(needed.size()) + " in-season valid dates of the reforecasts are not observed, the "
                   "first " + to_string(from_day_number(first, Calendar::ProlepticGregorian)) +
                   "; the observed sequence covers " +
                   (observed.dates.empty() ? std::string("no day")
                                           : to_string(observed.dates.front()) + " to " +
                                                 to_string(observed.dates.back())) +
                   ". Give --observed files that cover the reforecast years, or leave --observed out to use the "
                   "regime model's record");
}

CalibrationCases calibration_cases(const RegimeModel& model, const ReforecastSet& set, const ReforecastLabels& labels,
                                   const ObservedSequence& observed) {
  const int S = model.k() + 1;
  std::map<std::int64_t, int> seen;
  for (std::size_t t = 0; t < observed.dates.size(); ++t) seen[day_number(observed.dates[t])] = observed.labels[t];
  const MonthlyStateFrequencies monthly = monthly_state_frequencies(model);
  std::vector<arma::rowvec> p, c;
  CalibrationCases out;
  std::vector<double> members;
  std::size_t missing = 0;
  for (const auto& is : set.issues) {
    for (const DayProbabilities& day : daily_probabilities(tracks_of(set, labels, is), S, 0, 1 << 20)) {
      const Date valid = add_days(is.issue, day.offset);
      if (!in_season(model, valid)) continue;
      const auto it = seen.find(day_number(valid));
      if (it == seen.end()) {
        ++missing;
        continue;
      }
      p.push_back(day.probability.t());
      c.push_back(monthly.of(valid.month).t());
      members.push_back(day.members);
      out.observed.push_back(it->second);
      out.lead.push_back(day.offset);
      out.year.push_back(is.season_year);
      out.issue.push_back(is.issue);
      out.n_leads = std::max(out.n_leads, day.offset + 1);
    }
  }
  out.unobserved = missing;
  const auto at_lead1 = static_cast<std::size_t>(std::count(out.lead.begin(), out.lead.end(), 1));
  if (at_lead1 < kMinCasesPerLead)
    throw InputError("reforecasts (--reforecasts): " + std::to_string(at_lead1) +
                     " cases at lead day 1 valid in the model's season; the calibration needs at least " +
                     std::to_string(kMinCasesPerLead) + " per lead day (about " + std::to_string(kMinCasesPerLead) +
                     " reforecast initialisations in season over " + std::to_string(kMinCalibrationYears) +
                     " or more years)");
  out.p.set_size(p.size(), static_cast<arma::uword>(S));
  out.c.set_size(p.size(), static_cast<arma::uword>(S));
  for (std::size_t i = 0; i < p.size(); ++i) out.p.row(i) = p[i], out.c.row(i) = c[i];
  out.members = arma::vec(members);
  return out;
}

}  // namespace isohypse
