// The named steps of the post-mortem (src/stages/verify/) on planted cases:
// observed runs, episodes caught and missed, false alarms, cases built from
// guidance and observations.
#include <doctest/doctest.h>

#include "isohypse/base/error.hpp"
#include "stages/verify/episodes.hpp"
#include "stages/verify/false_alarms.hpp"
#include "stages/verify/verification_cases.hpp"
#include "verify_fixtures.hpp"

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

namespace {

CatchRule default_rule() { return {0.10, 0.15, two_regimes()}; }

GuidanceSet issues_before(std::int64_t onset, const std::vector<int>& leads) {
  GuidanceSet g;
  for (int lead : leads) g.issues.push_back({"issue.json", from_day_number(onset - lead, kReal), {}});
  return g;
}

}  // namespace

TEST_CASE("verify steps: an episode is caught by the issues that commit to it on the onset day") {
  // No regime on days 98..99, R1 on 100..105 (6 days), R2 on 106..107 (too short), no regime on 108..113.
  Cases cases;
  for (std::int64_t d = 98; d <= 113; ++d) cases.observed[d] = d <= 99 ? 2 : d <= 105 ? 0 : d <= 107 ? 1 : 2;
  const GuidanceSet guidance = issues_before(100, {4, 2, 0});
  cases.list = {a_case(0, 4, 100, 0, 0),   // issue 0 had R1 most likely 4 days ahead of the onset
                a_case(1, 2, 100, 1, 0),   // issue 1 had R2, with R1 at 0.2: not caught by it
                a_case(2, 0, 100, 0, 0)};  // lead 0 never counts
  const Episodes e = find_episodes(two_regime_model(), two_regimes(), cases, guidance, 5, default_rule());
  REQUIRE(e.list.size() == 1);  // the no-regime run is never an episode, the R2 run is too short
  CHECK(e.caught == 1);
  CHECK(e.missed == 0);
  CHECK(e.list[0]["regime"] == "R1");
  CHECK(e.list[0]["name"] == "trough");
  CHECK(e.list[0]["days"] == 6);
  CHECK(e.list[0]["issues"] == 2);
  CHECK(e.list[0]["longest_lead_days"] == 4);
  CHECK(e.list[0]["caught_at"].size() == 1);
  CHECK(e.list[0]["caught_at"][0]["lead_days"] == 4);
  // The issue 2 days ahead dropped it: the guidance never committed for good.
  CHECK(e.list[0]["committed_lead_days"].is_null());
  CHECK(e.list[0]["onset"] == to_string(from_day_number(100, kReal)));

  cases.list = {a_case(0, 3, 100, 1, 0)};
  const Episodes missed =
      find_episodes(two_regime_model(), two_regimes(), cases, issues_before(100, {3}), 5, default_rule());
  CHECK(missed.missed == 1);
  CHECK(missed.list[0]["longest_lead_days"].is_null());
}

TEST_CASE("verify steps: committed from the longest lead every later issue held") {
  Cases cases;
  for (std::int64_t d = 98; d <= 106; ++d) cases.observed[d] = d <= 99 ? 2 : 0;
  const GuidanceSet guidance = issues_before(100, {6, 5, 3, 1});
  // Leads 1 and 3 commit to R1, lead 5 does not, lead 6 does: committed from 3, caught at 6, 3 and 1.
  cases.list = {a_case(0, 6, 100, 0, 0), a_case(1, 5, 100, 1, 0), a_case(2, 3, 100, 0, 0), a_case(3, 1, 100, 0, 0)};
  const Episodes e = find_episodes(two_regime_model(), two_regimes(), cases, guidance, 5, default_rule());
  REQUIRE(e.list.size() == 1);
  CHECK(e.list[0]["committed_lead_days"] == 3);
  CHECK(e.list[0]["longest_lead_days"] == 6);
  CHECK(e.list[0]["caught_at"].size() == 3);
}

TEST_CASE("verify steps: a barely leading or barely above-climatology regime does not catch") {
  Cases cases;
  for (std::int64_t d = 98; d <= 106; ++d) cases.observed[d] = d <= 99 ? 2 : 0;
  Case close = a_case(0, 3, 100, 0, 0);
  close.p = arma::vec{0.45, 0.40, 0.15};  // ahead of R2 by 0.05 < 0.10
  cases.list = {close};
  const GuidanceSet guidance = issues_before(100, {3});
  CHECK(find_episodes(two_regime_model(), two_regimes(), cases, guidance, 5, default_rule()).missed == 1);
  cases.list[0].p = arma::vec{0.50, 0.25, 0.25};  // ahead by 0.25, but only 0.10 above its 0.4 frequency
  CHECK(find_episodes(two_regime_model(), two_regimes(), cases, guidance, 5, default_rule()).missed == 1);
  cases.list[0].p = arma::vec{0.56, 0.22, 0.22};  // ahead by 0.34 and 0.16 above: caught
  CHECK(find_episodes(two_regime_model(), two_regimes(), cases, guidance, 5, default_rule()).caught == 1);
  CatchRule loose = default_rule();
  loose.margin = 0.0;
  loose.excess = 0.0;
  cases.list[0].p = arma::vec{0.45, 0.40, 0.15};
  CHECK(find_episodes(two_regime_model(), two_regimes(), cases, guidance, 5, loose).caught == 1);
}

TEST_CASE("verify steps: an episode under way on the first day or before any issue is not scored") {
  Cases cases;
  for (std::int64_t d = 100; d <= 120; ++d) cases.observed[d] = d <= 106 ? 0 : d <= 109 ? 2 : 1;
  // R1 from day 100, the first observed day: its onset may lie before. R2 from day 110, no issue before it.
  cases.list = {a_case(0, 1, 101, 0, 0)};
  const GuidanceSet guidance = issues_before(101, {1});
  const Episodes e = find_episodes(two_regime_model(), two_regimes(), cases, guidance, 5, default_rule());
  CHECK(e.list.empty());
  CHECK(e.caught + e.missed == 0);
  CHECK(e.under_way == 1);
  CHECK(e.unseen == 1);
}

TEST_CASE("verify steps: false alarms are counted in full while the list keeps the first 500") {
  // 600 issues, each forecasting R2 for leads 1..5 while R1 was observed: 600 false alarms.
  GuidanceSet guidance;
  Cases cases;
  for (int g = 0; g < 600; ++g) {
    guidance.issues.push_back({"issue.json", from_day_number(1000 + g, kReal), {}});
    for (int lead = 1; lead <= 5; ++lead) cases.list.push_back(a_case(g, lead, 1000 + g + lead, 1, 0));
  }
  const FalseAlarms f = find_false_alarms(two_regimes(), guidance, cases, 5, default_rule());
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
  CHECK(find_false_alarms(two_regimes(), guidance, cases, 5, default_rule()).count == 0);
  cases.list[2].observed = 1;  // now confirmed on 2 of 6 days
  const FalseAlarms f = find_false_alarms(two_regimes(), guidance, cases, 5, default_rule());
  CHECK(f.count == 1);
  CHECK(f.list[0]["observed_fraction"].get<double>() == doctest::Approx(2.0 / 6.0));
  // By the same rule as a catch: a run the issue does not commit to is no alarm.
  for (auto& c : cases.list) c.p = arma::vec{0.45, 0.40, 0.15};
  CHECK(find_false_alarms(two_regimes(), guidance, cases, 5, default_rule()).count == 0);
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
  const auto [guidance, observed] = fixtures::march_april_issue(0);
  const std::vector<int>& season = fixtures::kNovemberToMarch;
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
