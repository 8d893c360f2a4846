#include <doctest/doctest.h>

#include <cmath>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/numerics/empirical_persistence.hpp"

using namespace isohypse;

namespace {

std::vector<char> all_consecutive(std::size_t n) {
  std::vector<char> c(n, 1);
  if (n) c[0] = 0;
  return c;
}

}  // namespace

TEST_CASE("empirical persistence: check values of METHODS.md section 8 (common practice)") {
  // METHODS.md §8 "Empirical persistence" on the sequence of §5 (Anderson &
  // Goodman 1957 check sequence); days whose next n days run past the end
  // are left out. State 2: 3/4, 2/4, 1/4 (Markov p_22^n 0.75, 0.5625,
  // 0.421875); state 0: 3/5, 1/4.
  const std::vector<int> seq = {0, 0, 0, 1, 1, 0, 2, 2, 2, 2, 1, 1, 0, 0};
  const std::vector<char> c = all_consecutive(seq.size());
  CHECK(lasting_count(seq, c, 2, 1).probability() == doctest::Approx(3.0 / 4.0));
  CHECK(lasting_count(seq, c, 2, 2).probability() == doctest::Approx(2.0 / 4.0));
  CHECK(lasting_count(seq, c, 2, 3).probability() == doctest::Approx(1.0 / 4.0));
  CHECK(lasting_count(seq, c, 0, 1).probability() == doctest::Approx(3.0 / 5.0));
  CHECK(lasting_count(seq, c, 0, 2).probability() == doctest::Approx(1.0 / 4.0));
  CHECK(lasting_count(seq, c, 0, 2).cases == 4);
  CHECK(lasting_count(seq, c, 2, 3).cases == 4);
  // No day of state 2 has 9 more days in the record.
  CHECK(lasting_count(seq, c, 2, 9).cases == 0);
  CHECK(std::isnan(lasting_count(seq, c, 2, 9).probability()));
}

TEST_CASE("empirical persistence: conditioned on the spell's age across a season break (worked by hand)") {
  // Worked by hand. Season A: 1 1 1 1 0 0 1 1 1 | break | season B: 1 1 0 1 1 1 1.
  // State 1, n = 2. Age 1: A0 (lasts), A6 (lasts), B0 (1 0: no), B3 (lasts) -> 3/4.
  // Age 2: A1 (lasts), A7 (A9 beyond the break: left out), B1 (0 1: no), B4 (lasts) -> 2/3.
  // Age 3: A2 (1 0: no), A8 and B5 left out -> 0/1.
  // All ages: A0 A1 A2 A3 A6 B0 B1 B3 B4 count, A0 A1 A6 B3 B4 last -> 5/9.
  // Counting across the break would add A7 (lasts) and give B0 age 4.
  const std::vector<int> seq = {1, 1, 1, 1, 0, 0, 1, 1, 1, 1, 1, 0, 1, 1, 1, 1};
  std::vector<char> c = all_consecutive(seq.size());
  c[9] = 0;
  const LastingCount a1 = lasting_count(seq, c, 1, 2, 1), a2 = lasting_count(seq, c, 1, 2, 2);
  const LastingCount a3 = lasting_count(seq, c, 1, 2, 3), all = lasting_count(seq, c, 1, 2);
  CHECK(a1.cases == 4);
  CHECK(a1.lasted == 3);
  CHECK(a2.cases == 3);
  CHECK(a2.lasted == 2);
  CHECK(a3.cases == 1);
  CHECK(a3.lasted == 0);
  CHECK(all.cases == 9);
  CHECK(all.lasted == 5);
  // Enough cases of age 2 (3 >= 3): conditioned. Too few (3 < 4): unconditioned, and says so.
  const EmpiricalLasting kept = empirical_lasting(seq, c, 1, 2, 2, 3);
  CHECK(kept.probability == doctest::Approx(2.0 / 3.0));
  CHECK(kept.age_days == 2);
  CHECK(kept.cases == 3);
  const EmpiricalLasting fell = empirical_lasting(seq, c, 1, 2, 2, 4);
  CHECK(fell.probability == doctest::Approx(5.0 / 9.0));
  CHECK(fell.age_days == 0);
  CHECK(fell.cases == 9);
  CHECK(fell.age_cases == 3);
  // A missing label (-1) breaks the run and is never part of a horizon: A7 -> -1
  // leaves out A6 (its next day is missing) and makes A8 age 1 (left out: the break).
  std::vector<int> gap = seq;
  gap[7] = -1;
  CHECK(lasting_count(gap, c, 1, 2, 1).cases == 3);
  CHECK_THROWS_AS(lasting_count(seq, c, 1, 0), InternalError);
  CHECK_THROWS_AS(lasting_count(seq, {0, 1}, 1, 2), InternalError);
  CHECK_THROWS_AS(empirical_lasting(seq, c, 1, 2, 1, 0), InternalError);
}

TEST_CASE("empirical persistence: the model's record as season states") {
  // Days 1..6 January in season, 7 January out, 8..9 in; then 12 January (a gap).
  RegimeModel m;
  m.path = "planted.nc";
  m.centroids.zeros(2, 3);  // k = 3; no regime is state 3
  for (int d : {1, 2, 3, 4, 5, 6, 7, 8, 9, 12}) m.dates.push_back(make_date(2001, 1, d));
  m.labels = {0, 0, -1, 2, 2, 2, 1, 2, 2, 2};
  m.in_season = {1, 1, 1, 1, 1, 1, 0, 1, 1, 1};
  const SeasonRecord r = season_record(m);
  CHECK(r.states == std::vector<int>{0, 0, 3, 2, 2, 2, 2, 2, 2});
  CHECK(r.consecutive == std::vector<char>{0, 1, 1, 1, 1, 1, 0, 1, 0});
  // State 2, n = 1: 4, 5 and 8 Jan last; 6, 9 and 12 Jan have no next day in the season.
  const LastingCount c = lasting_count(r.states, r.consecutive, 2, 1);
  CHECK(c.cases == 3);
  CHECK(c.lasted == 3);
  m.labels[1] = 3;
  CHECK_THROWS_WITH_AS(season_record(m), doctest::Contains("planted.nc: label 3 on 2001-01-02"), DataError);
  m.labels.pop_back();
  CHECK_THROWS_AS(season_record(m), DataError);
}
