#include <doctest/doctest.h>

#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/numerics/model_drift.hpp"

using namespace isohypse;

// numerics/model_drift on small planted matrices; every expected value is
// worked by hand in the comments (the definitions are those of
// include/isohypse/numerics/model_drift.hpp and ../shared/METHODS.md §8,
// mean-drift removal, common practice).

namespace {

std::vector<Date> consecutive_days(int n) {
  std::vector<Date> d;
  for (int l = 0; l < n; ++l) d.push_back(add_days(make_date(2026, 1, 10, Calendar::NoLeap), l));
  return d;
}

// A member whose heights are `climate` + `difference`: what add_member must sum is the difference.
void add_planted(DriftSum& sum, const arma::fmat& climate, const arma::fmat& difference) {
  add_member(sum, climate + difference, climate);
}

}  // namespace

TEST_CASE("model drift: add_member sums heights minus the climatology and counts the members") {
  const arma::fmat climate = {{5500, 5510, 5520}, {5300, 5290, 5280}};
  DriftSum s;
  add_planted(s, climate, arma::fmat{{1, 2, 3}, {-1, 0, 4}});
  add_planted(s, climate, arma::fmat{{3, 2, 1}, {5, 6, 0}});
  CHECK(s.members == 2);
  REQUIRE(s.difference.n_rows == 2);
  REQUIRE(s.difference.n_cols == 3);
  // {1+3, 2+2, 3+1; -1+5, 0+6, 4+0}
  const arma::fmat want = {{4, 4, 4}, {4, 6, 4}};
  CHECK(arma::approx_equal(s.difference, want, "absdiff", 1e-3f));
}

TEST_CASE("model drift: two parts are weighted by their member counts not by part") {
  // Part A: one member of difference 10 at point 0 and 0 at point 1; part B:
  // three members of difference 2, 4 and 6 at point 0 and 8 at point 1.
  // Member-weighted: point 0 (10 + 2 + 4 + 6) / 4 = 5.5, point 1 (0 + 24) / 4
  // = 6. The mean of the two parts' means would give 7 and 4 instead.
  const arma::fmat climate(2, 3, arma::fill::value(5500.0f));
  DriftSum a, b;
  add_planted(a, climate, arma::fmat{{10, 10, 10}, {0, 0, 0}});
  for (float v : {2.0f, 4.0f, 6.0f}) add_planted(b, climate, arma::fmat{{v, v, v}, {8, 8, 8}});
  const arma::fmat d = mean_drift({&a, &b}, 2, consecutive_days(3), 1);
  REQUIRE(d.n_rows == 2);
  REQUIRE(d.n_cols == 3);
  for (arma::uword l = 0; l < 3; ++l) {
    CHECK(d(0, l) == doctest::Approx(5.5));
    CHECK(d(1, l) == doctest::Approx(6.0));
  }
  // A part without members adds nothing.
  DriftSum empty;
  CHECK(arma::approx_equal(mean_drift({&a, &empty, &b}, 2, consecutive_days(3), 1), d, "absdiff", 1e-6f));
}

TEST_CASE("model drift: a centred running mean along lead with shorter windows at the ends") {
  // One member, difference l^2 at point 0 and 2l at point 1 over 6 lead days;
  // the forecast has 4 lead days, so lead days 0..3 are used. 3-day window
  // (one day either side, cut at the ends): point 0: (0+1)/2, (0+1+4)/3,
  // (1+4+9)/3, (4+9)/2 = 0.5, 5/3, 14/3, 6.5 (lead 3's window stops at the
  // forecast's last lead, not at the reforecast's lead 4); point 1 (linear):
  // 1, 2, 4, 5.
  const arma::fmat climate(2, 6, arma::fill::zeros);
  arma::fmat diff(2, 6);
  for (arma::uword l = 0; l < 6; ++l) {
    diff(0, l) = static_cast<float>(l * l);
    diff(1, l) = 2.0f * static_cast<float>(l);
  }
  DriftSum s;
  add_planted(s, climate, diff);
  const arma::fmat d = mean_drift({&s}, 2, consecutive_days(4), 3);
  REQUIRE(d.n_cols == 4);
  CHECK(d(0, 0) == doctest::Approx(0.5));
  CHECK(d(0, 1) == doctest::Approx(5.0 / 3.0));
  CHECK(d(0, 2) == doctest::Approx(14.0 / 3.0));
  CHECK(d(0, 3) == doctest::Approx(6.5));
  CHECK(d(1, 0) == doctest::Approx(1.0));
  CHECK(d(1, 1) == doctest::Approx(2.0));
  CHECK(d(1, 2) == doctest::Approx(4.0));
  CHECK(d(1, 3) == doctest::Approx(5.0));
  // 5-day window (two days either side): lead 0 averages leads 0..2 = 5/3,
  // lead 1 leads 0..3 = 14/4 = 3.5. Smoothing 0 or 1 leaves l^2.
  const arma::fmat d5 = mean_drift({&s}, 2, consecutive_days(4), 5);
  CHECK(d5(0, 0) == doctest::Approx(5.0 / 3.0));
  CHECK(d5(0, 1) == doctest::Approx(3.5));
  const arma::fmat d1 = mean_drift({&s}, 2, consecutive_days(4), 1);
  CHECK(d1(0, 3) == doctest::Approx(9.0));
}

TEST_CASE("model drift: broken preconditions throw InternalError") {
  const arma::fmat climate(2, 3, arma::fill::zeros);
  DriftSum s;
  // Heights and climatology of different sizes.
  CHECK_THROWS_AS(add_member(s, arma::fmat(2, 4, arma::fill::zeros), climate), InternalError);
  CHECK(s.members == 0);
  add_member(s, arma::fmat(2, 3, arma::fill::ones), climate);
  // A second member of other lead days than the first.
  CHECK_THROWS_AS(add_member(s, arma::fmat(2, 4, arma::fill::ones), arma::fmat(2, 4, arma::fill::zeros)),
                  InternalError);
  CHECK(s.members == 1);
  // No member at all: none given, or only empty parts.
  DriftSum empty;
  CHECK_THROWS_AS(mean_drift(std::vector<const DriftSum*>{}, 2, consecutive_days(3), 1), InternalError);
  CHECK_THROWS_AS(mean_drift({&empty}, 2, consecutive_days(3), 1), InternalError);
  // A part of other points than asked for, or of fewer lead days than the forecast's.
  CHECK_THROWS_AS(mean_drift({&s}, 3, consecutive_days(3), 1), InternalError);
  CHECK_THROWS_AS(mean_drift({&s}, 2, consecutive_days(4), 1), InternalError);
  CHECK_NOTHROW(mean_drift({&s}, 2, consecutive_days(2), 1));
}
