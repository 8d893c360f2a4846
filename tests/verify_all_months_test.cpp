// --all-months (issue 12, "Season"): the monthly climatology of the model's
// record on a planted record whose counts are known by construction, the
// reference forecast of each case in the skill scores and the catch rule,
// and the out-of-season cases kept. The skill scores are computed by hand
// from their definitions: multi-category Brier score sum_k (p_k - o_k)^2 and
// skill 1 - BS / BS_ref (Wilks 2011, Statistical Methods in the Atmospheric
// Sciences, 3rd ed., ch. 8).
#include <doctest/doctest.h>

#include <cmath>
#include <string>

#include "isohypse/base/error.hpp"
#include "stages/verify/case_scores.hpp"
#include "stages/verify/episodes.hpp"
#include "stages/verify/state_climatology.hpp"
#include "stages/verify/verification_cases.hpp"
#include "verify_fixtures.hpp"

using namespace isohypse;
using namespace isohypse::verification;

namespace {

const Calendar kReal = Calendar::ProlepticGregorian;

// Two regimes; a record of 2001-2002, every day of every month. On day d of
// a month the label is R1 (0) for d <= 10 (d <= 3 from April to September),
// R2 (1) for 11 <= d <= 20, no regime (-1) after. So January holds, over the
// two years, 20 R1, 20 R2 and 22 no-regime days of 62, and April 6, 20 and 34
// of 60. The season (Nov-Mar) frequencies are set apart: 0.7, 0.2 (0.1 left
// to no regime), so that a test can tell which reference was used.
RegimeModel planted_model(bool without_april = false) {
  RegimeModel m;
  m.centroids.zeros(1, 2);
  m.regimes = {{"R1", "trough", 0.7}, {"R2", "ridge", 0.2}};
  m.months = {11, 12, 1, 2, 3};
  m.path = "planted-model.nc";
  const Date first = make_date(2001, 1, 1, Calendar::Standard);
  for (int t = 0; t < 730; ++t) {
    const Date d = add_days(first, t);
    if (without_april && d.month == 4) continue;
    const bool summer = d.month >= 4 && d.month <= 9;
    m.dates.push_back(d);
    m.labels.push_back(d.day <= (summer ? 3 : 10) ? 0 : d.day >= 11 && d.day <= 20 ? 1 : -1);
    m.in_season.push_back(d.month >= 11 || d.month <= 3);
  }
  return m;
}

Case case_of(int month, arma::vec p, int observed) {
  Case c;
  c.month = month;
  c.p = std::move(p);
  c.most_likely = static_cast<int>(c.p.index_max());
  c.observed = observed;
  return c;
}

double mcbs(const arma::vec& p, int observed) {
  double s = 0;
  for (arma::uword k = 0; k < p.n_elem; ++k) s += std::pow(p(k) - (static_cast<int>(k) == observed), 2);
  return s;
}

}  // namespace

TEST_CASE("all months: the monthly climatology counts every record day of each month") {
  const StateClimatology season = state_climatology(planted_model());
  CHECK_FALSE(season.by_month());
  CHECK(season.reference(4)(0) == doctest::Approx(0.7));  // default: the season's frequency in every month
  CHECK(season.reference(4)(2) == doctest::Approx(0.1));

  const StateClimatology c = state_climatology(planted_model(), true);
  REQUIRE(c.by_month());
  CHECK(c.monthly_days[0] == 62);
  CHECK(c.monthly_days[1] == 56);
  CHECK(c.monthly_days[3] == 60);
  const arma::vec jan = c.reference(1), apr = c.reference(4);
  CHECK(jan(0) == doctest::Approx(20.0 / 62));
  CHECK(jan(1) == doctest::Approx(20.0 / 62));
  CHECK(jan(2) == doctest::Approx(22.0 / 62));
  CHECK(apr(0) == doctest::Approx(6.0 / 60));  // out of season, counted all the same
  CHECK(apr(1) == doctest::Approx(20.0 / 60));
  CHECK(apr(2) == doctest::Approx(34.0 / 60));
  CHECK(c.reference(2)(2) == doctest::Approx(16.0 / 56));
  CHECK(c.frequency(0) == doctest::Approx(0.7));  // the season's stays for the report
}

TEST_CASE("all months: a valid month without a record day is refused naming the month and the model") {
  const StateClimatology c = state_climatology(planted_model(true), true);
  CHECK(c.monthly_days[3] == 0);
  CHECK(std::isnan(c.reference(4)(0)));
  Cases cases;
  cases.list = {case_of(1, arma::vec{0.5, 0.3, 0.2}, 0)};
  CHECK_NOTHROW(require_reference_months(c, cases, "planted-model.nc"));
  cases.list.push_back(case_of(4, arma::vec{0.5, 0.3, 0.2}, 0));
  try {
    require_reference_months(c, cases, "planted-model.nc");
    FAIL("expected InputError");
  } catch (const InputError& e) {
    const std::string msg = e.what();
    CHECK(msg.find("April") != std::string::npos);
    CHECK(msg.find("planted-model.nc") != std::string::npos);
  }
  // The default mode never asks for a month of the record.
  CHECK_NOTHROW(require_reference_months(state_climatology(planted_model(true)), cases, "planted-model.nc"));
}

TEST_CASE("all months: every case is scored against the climatology of its valid month") {
  Cases cases;
  cases.list = {case_of(1, arma::vec{0.6, 0.3, 0.1}, 0), case_of(4, arma::vec{0.2, 0.2, 0.6}, 2)};
  const std::vector<std::size_t> idx = {0, 1};
  const arma::vec jan{20.0 / 62, 20.0 / 62, 22.0 / 62}, apr{6.0 / 60, 20.0 / 60, 34.0 / 60};
  const arma::vec season{0.7, 0.2, 0.1};
  const double bs = (0.26 + 0.24) / 2;  // (0.4^2 + 0.3^2 + 0.1^2 + 0.2^2 + 0.2^2 + 0.4^2) / 2

  const HeadlineScores monthly = headline_scores(cases, idx, state_climatology(planted_model(), true));
  CHECK(monthly.brier == doctest::Approx(bs));
  CHECK(monthly.brier_skill == doctest::Approx(1 - bs / ((mcbs(jan, 0) + mcbs(apr, 2)) / 2)));
  const HeadlineScores by_season = headline_scores(cases, idx, state_climatology(planted_model()));
  CHECK(by_season.brier_skill == doctest::Approx(1 - bs / ((mcbs(season, 0) + mcbs(season, 2)) / 2)));

  // Per state: R1 forecast 0.6 and 0.2, observed 1 and 0.
  VerifyConfig config;
  config.reliability_bins = 10;
  const auto states = state_scores_json(cases, idx, state_climatology(planted_model(), true), config, false);
  const double ref = (std::pow(1 - jan(0), 2) + std::pow(apr(0), 2)) / 2;
  CHECK(states["R1"]["brier_skill"].get<double>() == doctest::Approx(1 - ((0.16 + 0.04) / 2) / ref));
}

TEST_CASE("all months: the catch rule compares with the valid month's climatological frequency") {
  const CatchRule monthly{0.10, 0.15, state_climatology(planted_model(), true)};
  const CatchRule by_season{0.10, 0.15, state_climatology(planted_model())};
  // R1 at 0.47, 0.17 ahead of R2: 0.37 above April's 0.1, only 0.147 above
  // January's 20/62, and below the season's 0.7.
  const Case april = case_of(4, arma::vec{0.47, 0.30, 0.23}, 0);
  const Case january = case_of(1, arma::vec{0.47, 0.30, 0.23}, 0);
  CHECK(monthly.commits(april, 0));
  CHECK_FALSE(monthly.commits(january, 0));
  CHECK_FALSE(by_season.commits(april, 0));
  // 0.50 in January: 0.177 above 20/62.
  CHECK(monthly.commits(case_of(1, arma::vec{0.50, 0.30, 0.20}, 0), 0));
}

TEST_CASE("all months: out-of-season days are kept and still counted") {
  // An issue of 2026-03-30 with leads 0..4: two March days in a Nov-Mar season, three April days.
  const auto [guidance, observed] = fixtures::march_april_issue(1);
  const std::vector<int>& season = fixtures::kNovemberToMarch;
  VerifyConfig config;
  config.all_months = true;
  const Cases cases = build_cases(guidance, observed, 3, config, season);
  REQUIRE(cases.list.size() == 5);
  CHECK(cases.list[4].month == 4);
  CHECK(cases.out_of_season.at(4) == 3);
  config.from = make_date(2026, 4, 1, kReal);  // only April: refused without the flag, scored with it
  CHECK(build_cases(guidance, observed, 3, config, season).list.size() == 3);
}
