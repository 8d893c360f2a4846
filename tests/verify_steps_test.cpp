// The named steps of the post-mortem (src/stages/verify/) on planted cases:
// observed runs, episodes caught and missed, false alarms, cases built from
// guidance and observations.
#include <doctest/doctest.h>

#include "isohypse/base/error.hpp"
#include "stages/verify/episodes.hpp"
#include "stages/verify/false_alarms.hpp"
#include "stages/verify/verification_cases.hpp"

using namespace isohypse;
using namespace isohypse::verification;

namespace {

const Calendar kReal = Calendar::ProlepticGregorian;

// Two regimes and the no-regime state.
StateClimatology two_regimes() { return {{"R1", "R2", "no_regime"}, arma::vec{0.4, 0.4, 0.2}}; }

RegimeModel two_regime_model() {
  RegimeModel m;
  m.centroids.zeros(1, 2);
  m.regimes = {{"R1", "trough", 0.4}, {"R2", "ridge", 0.4}};
  return m;
}

Case a_case(int issue, int lead, std::int64_t valid, int most_likely, int observed) {
  Case c;
  c.issue = issue;
  c.lead = lead;
  c.valid = valid;
  c.month = 1;
  c.p = arma::vec{0.2, 0.2, 0.6};
  c.p(most_likely) = 0.6;
  c.p(2) = most_likely == 2 ? 0.6 : 0.2;
  c.most_likely = most_likely;
  c.observed = observed;
  return c;
}

}  // namespace

TEST_CASE("verify steps: observed runs end at a change of state or a missing day") {
  const ObservedDays days = {{10, 0}, {11, 0}, {12, 1}, {14, 1}, {15, 1}};
  const std::vector<ObservedRun> runs = observed_runs(days);
  REQUIRE(runs.size() == 3);
  CHECK((runs[0].state == 0 && runs[0].onset == 10 && runs[0].end == 11 && runs[0].days == 2));
  CHECK((runs[1].state == 1 && runs[1].onset == 12 && runs[1].days == 1));
  CHECK((runs[2].state == 1 && runs[2].onset == 14 && runs[2].end == 15 && runs[2].days == 2));
}

TEST_CASE("verify steps: an episode is caught by the longest lead that had it on the onset day") {
  // R1 observed on days 100..105 (6 days), then R2 on 106..107 (too short), no regime on 108..113.
  Cases cases;
  for (std::int64_t d = 100; d <= 113; ++d) cases.observed[d] = d <= 105 ? 0 : d <= 107 ? 1 : 2;
  cases.list = {a_case(0, 4, 100, 0, 0),   // issue 0 had R1 most likely 4 days ahead of the onset
                a_case(1, 2, 100, 1, 0),   // issue 1 had R2, with R1 at 0.2: not caught by it
                a_case(2, 0, 100, 0, 0)};  // lead 0 never counts
  const Episodes e = find_episodes(two_regime_model(), two_regimes(), cases, 3, 5);
  REQUIRE(e.list.size() == 1);  // the no-regime run is never an episode, the R2 run is too short
  CHECK(e.caught == 1);
  CHECK(e.missed == 0);
  CHECK(e.list[0]["regime"] == "R1");
  CHECK(e.list[0]["name"] == "trough");
  CHECK(e.list[0]["days"] == 6);
  CHECK(e.list[0]["longest_lead_days"] == 4);
  CHECK(e.list[0]["onset"] == to_string(from_day_number(100, kReal)));

  cases.list = {a_case(0, 3, 100, 1, 0)};
  const Episodes missed = find_episodes(two_regime_model(), two_regimes(), cases, 1, 5);
  CHECK(missed.missed == 1);
  CHECK(missed.list[0]["longest_lead_days"].is_null());
}

TEST_CASE("verify steps: false alarms are counted in full while the list keeps the first 500") {
  // 600 issues, each forecasting R2 for leads 1..5 while R1 was observed: 600 false alarms.
  GuidanceSet guidance;
  Cases cases;
  for (int g = 0; g < 600; ++g) {
    guidance.issues.push_back({"issue.json", from_day_number(1000 + g, kReal), {}});
    for (int lead = 1; lead <= 5; ++lead) cases.list.push_back(a_case(g, lead, 1000 + g + lead, 1, 0));
  }
  const FalseAlarms f = find_false_alarms(two_regimes(), guidance, cases, 5);
  CHECK(f.count == 600);
  CHECK(f.list.size() == FalseAlarms::kListed);
  CHECK(f.by_regime == std::vector<int>{0, 600});
  CHECK(f.list[0]["regime"] == "R2");
  CHECK(f.list[0]["from_lead_days"] == 1);
  CHECK(f.list[0]["to_lead_days"] == 5);
  CHECK(f.list[0]["observed_fraction"] == 0.0);
}

TEST_CASE("verify steps: a forecast run the observations confirm on half its days is no false alarm") {
  GuidanceSet guidance;
  guidance.issues.push_back({"issue.json", from_day_number(1000, kReal), {}});
  Cases cases;
  for (int lead = 1; lead <= 6; ++lead) cases.list.push_back(a_case(0, lead, 1000 + lead, 0, lead <= 3 ? 0 : 1));
  CHECK(find_false_alarms(two_regimes(), guidance, cases, 5).count == 0);
  cases.list[2].observed = 1;  // now confirmed on 2 of 6 days
  const FalseAlarms f = find_false_alarms(two_regimes(), guidance, cases, 5);
  CHECK(f.count == 1);
  CHECK(f.list[0]["observed_fraction"].get<double>() == doctest::Approx(2.0 / 6.0));
}

TEST_CASE("verify steps: cases pair guidance with the observed day inside the period asked") {
  GuidanceSet guidance;
  GuidanceIssue issue{"a.json", make_date(2026, 1, 1, kReal), {}};
  for (int lead = 0; lead <= 3; ++lead)
    issue.daily.push_back({add_days(issue.issue, lead), lead, arma::vec{0.5, 0.3, 0.2}, 0});
  guidance.issues.push_back(issue);
  ObservedSequence observed;
  observed.source = "analysis files";
  for (int d = 1; d <= 3; ++d) {  // no observation for lead 0 (2026-01-01)
    observed.dates.push_back(make_date(2026, 1, 1 + d, kReal));
    observed.labels.push_back(d % 3);
  }
  VerifyConfig config;
  config.to = make_date(2026, 1, 3, kReal);  // leaves lead 3 out
  const Cases cases = build_cases(guidance, observed, 3, config);
  REQUIRE(cases.list.size() == 2);
  CHECK((cases.list[0].lead == 1 && cases.list[0].observed == 1 && cases.list[1].observed == 2));
  CHECK(cases.max_lead == 2);
  CHECK(cases.observed.size() == 2);

  config.from = make_date(2027, 1, 1, kReal);
  config.to = std::nullopt;
  CHECK_THROWS_AS(build_cases(guidance, observed, 3, config), InputError);
}

TEST_CASE("verify steps: days outside the model's season are counted and not scored") {
  // An issue of 2026-03-30 with leads 0..4: 30 and 31 March in a Nov-Mar
  // season, 1..3 April outside it (issue 12: no April case in the scores).
  GuidanceSet guidance;
  GuidanceIssue issue{"a.json", make_date(2026, 3, 30, kReal), {}};
  for (int lead = 0; lead <= 4; ++lead)
    issue.daily.push_back({add_days(issue.issue, lead), lead, arma::vec{0.5, 0.3, 0.2}, 0});
  guidance.issues.push_back(issue);
  ObservedSequence observed;
  observed.source = "analysis files";
  for (int d = 0; d <= 4; ++d) {
    observed.dates.push_back(add_days(issue.issue, d));
    observed.labels.push_back(0);
  }
  const std::vector<int> season = {11, 12, 1, 2, 3};
  const Cases cases = build_cases(guidance, observed, 3, VerifyConfig{}, season);
  REQUIRE(cases.list.size() == 2);
  CHECK(cases.list[1].month == 3);
  REQUIRE(cases.out_of_season.size() == 1);
  CHECK(cases.out_of_season.at(4) == 3);
  CHECK(build_cases(guidance, observed, 3, VerifyConfig{}).list.size() == 5);  // no season: every month
  VerifyConfig april;
  april.from = make_date(2026, 4, 1, kReal);
  try {
    build_cases(guidance, observed, 3, april, season);
    FAIL("expected InputError");
  } catch (const InputError& e) {
    CHECK(std::string(e.what()).find("outside the regime model's season") != std::string::npos);
  }
}

TEST_CASE("verify steps: an observed label outside the states is a bug inside the library") {
  GuidanceSet guidance;
  guidance.issues.push_back({"a.json", make_date(2026, 1, 1, kReal), {}});
  ObservedSequence observed;
  observed.dates = {make_date(2026, 1, 1, kReal)};
  observed.labels = {3};  // 3 states: 0..2
  CHECK_THROWS_AS(build_cases(guidance, observed, 3, VerifyConfig{}), InternalError);
}
