// The observed outcome of a lead window and the climatological dominance
// probability (src/stages/verify/window_outcomes) on planted sequences whose
// answers are counted by hand in the comments.
#include <doctest/doctest.h>

#include "isohypse/base/error.hpp"
#include "stages/verify/window_outcomes.hpp"

using namespace isohypse;
using namespace isohypse::verification;

TEST_CASE("window outcomes: observed days per state and the dominant state") {
  const WindowOutcome w = observed_window({0, 0, 1, 2, 0}, 3);
  CHECK(w.days(0) == 3);
  CHECK(w.days(1) == 1);
  CHECK(w.days(2) == 1);
  CHECK(w.dominant == 0);
  CHECK(observed_window({2}, 3).dominant == 2);
}

TEST_CASE("window outcomes: a tie for the most observed days has no dominant state") {
  const WindowOutcome w = observed_window({0, 1, 1, 0, 2}, 3);  // 2 days each of states 0 and 1
  CHECK(w.dominant == kTiedWindow);
  CHECK(arma::accu(w.days) == 5);
  CHECK_THROWS_AS(observed_window({}, 3), InternalError);
  CHECK_THROWS_AS(observed_window({0, 3}, 3), InternalError);
}

TEST_CASE("window outcomes: climatological dominance over every run of consecutive days") {
  // The sequence of ../shared/METHODS.md section 5, 14 consecutive in-season
  // days. Its 12 windows of 3 days, by hand: 000 -> 0, 001 -> 0, 011 -> 1,
  // 110 -> 1, 102 -> a three-way tie (1/3 each), 022 -> 2, 222 -> 2, 222 -> 2,
  // 221 -> 2, 211 -> 1, 110 -> 1, 100 -> 0: state 0 3 + 1/3, state 1 4 + 1/3,
  // state 2 4 + 1/3 windows of 12.
  const std::vector<int> states = {0, 0, 0, 1, 1, 0, 2, 2, 2, 2, 1, 1, 0, 0};
  std::vector<std::int64_t> days;
  for (std::int64_t d = 0; d < 14; ++d) days.push_back(100 + d);
  const arma::vec p = climatological_dominance(days, states, std::vector<char>(14, 1), 3, 3);
  CHECK(p(0) == doctest::Approx(10.0 / 36).epsilon(1e-14));
  CHECK(p(1) == doctest::Approx(13.0 / 36).epsilon(1e-14));
  CHECK(p(2) == doctest::Approx(13.0 / 36).epsilon(1e-14));
  // Windows of one day: the dominance is the frequency, 6/14, 4/14 and 4/14.
  const arma::vec one = climatological_dominance(days, states, std::vector<char>(14, 1), 3, 1);
  CHECK(one(0) == doctest::Approx(6.0 / 14).epsilon(1e-14));
  CHECK(one(1) == doctest::Approx(4.0 / 14).epsilon(1e-14));
  CHECK(one(2) == doctest::Approx(4.0 / 14).epsilon(1e-14));
}

TEST_CASE("window outcomes: no climatological window crosses a gap or a day out of season") {
  // Days 1..5 and 7..9 (day 6 missing), day 4 out of season. Windows of 2
  // days: (1,2) 00 -> 0; (2,3) 01 -> tie 1/2 each; (3,4) and (4,5) hold the
  // out-of-season day, (5,7) the gap; (7,8) 22 -> 2; (8,9) 22 -> 2. Four
  // windows: 1.5, 0.5 and 2 of 4.
  const std::vector<std::int64_t> days = {1, 2, 3, 4, 5, 7, 8, 9};
  const std::vector<int> states = {0, 0, 1, 1, 0, 2, 2, 2};
  const std::vector<char> in_season = {1, 1, 1, 0, 1, 1, 1, 1};
  const arma::vec p = climatological_dominance(days, states, in_season, 3, 2);
  CHECK(p(0) == doctest::Approx(0.375).epsilon(1e-14));
  CHECK(p(1) == doctest::Approx(0.125).epsilon(1e-14));
  CHECK(p(2) == doctest::Approx(0.5).epsilon(1e-14));
  // No run of 4 consecutive in-season days: unknown, NaN for every state.
  CHECK(climatological_dominance(days, states, in_season, 3, 4).has_nan());
  CHECK_THROWS_AS(climatological_dominance(days, states, in_season, 3, 0), InternalError);
  CHECK_THROWS_AS(climatological_dominance(days, {0, 1}, in_season, 3, 2), InternalError);
}

TEST_CASE("window outcomes: the model's record with no-regime days as the last state") {
  // k = 2 regimes; labels 0, -1, -1, 1 are states 0, 2, 2, 1. Windows of 2
  // days: (0,2) tie, (2,2) -> 2, (2,1) tie: state 0 1/2, state 1 1/2, state 2
  // 1 + 1/2 + 1/2 = 2, of 3.
  RegimeModel m;
  m.centroids.zeros(1, 2);
  for (int d = 1; d <= 4; ++d) m.dates.push_back(make_date(2021, 1, d, Calendar::NoLeap));
  m.labels = {0, -1, -1, 1};
  m.in_season = {1, 1, 1, 1};
  const arma::vec p = climatological_dominance(m, 2);
  REQUIRE(p.n_elem == 3);
  CHECK(p(0) == doctest::Approx(1.0 / 6).epsilon(1e-14));
  CHECK(p(1) == doctest::Approx(1.0 / 6).epsilon(1e-14));
  CHECK(p(2) == doctest::Approx(2.0 / 3).epsilon(1e-14));
}
