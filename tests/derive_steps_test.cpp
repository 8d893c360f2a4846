// The derive stage's steps (src/stages/derive/): the one seed of a
// DeriveConfig reaches every random choice, and the season step.
#include <doctest/doctest.h>

#include "isohypse/base/error.hpp"
#include "isohypse/stages/derive_config.hpp"
#include "stages/derive/clustering.hpp"
#include "stages/derive/eof_step.hpp"
#include "stages/derive/regime_count.hpp"
#include "stages/derive/regime_statistics.hpp"
#include "stages/derive/season.hpp"

using namespace isohypse;
using namespace isohypse::derive_steps;

TEST_CASE("derive: the config's seed reaches the randomized EOFs") {
  DeriveConfig cfg;
  cfg.eof.method = EofOptions::Method::Randomized;
  cfg.eof.count = 3;
  cfg.seed = 7;
  const EofOptions opt = eof_options(cfg);
  CHECK(opt.seed == 7);
  CHECK(opt.method == EofOptions::Method::Randomized);
  CHECK(opt.count == 3);
  cfg.seed = 8;
  CHECK(eof_options(cfg).seed == 8);
}

TEST_CASE("derive: the config's seed reaches the classifiability table and k-means") {
  DeriveConfig cfg;
  cfg.seed = 12345;
  cfg.threads = 2;
  const RegimeCountOptions rco = regime_count_options(cfg, 100);
  CHECK(rco.seed == 12345);
  CHECK(rco.threads == 2);
  CHECK(rco.k_max == cfg.k_max);
  CHECK(regime_count_options(cfg, 5).k_max == 4);  // at most season days - 1
  const KMeansOptions ko = kmeans_options(cfg, 4);
  CHECK(ko.seed == 12345);
  CHECK(ko.k == 4);
  CHECK(ko.restarts == cfg.restarts);
}

TEST_CASE("derive: randomized EOFs of the same data differ with the seed and repeat with it") {
  // A float anomaly matrix with a slowly decaying spectrum, so the subspace
  // iteration stops before the test matrix stops mattering in the last bits.
  arma::arma_rng::set_seed(3);
  const arma::uword n_space = 300, n_time = 200;
  arma::fmat X = arma::randn<arma::fmat>(n_space, n_time);
  for (arma::uword i = 0; i < n_space; ++i) X.row(i) *= 1.0f + 0.002f * float(i);
  const std::vector<char> next(n_time, 1);
  DeriveConfig cfg;
  cfg.eof.method = EofOptions::Method::Randomized;
  cfg.eof.count = 5;
  cfg.seed = 1;
  const EofResult a = compute_eofs(X, next, eof_options(cfg));
  const EofResult again = compute_eofs(X, next, eof_options(cfg));
  cfg.seed = 2;
  const EofResult b = compute_eofs(X, next, eof_options(cfg));
  CHECK(a.method == "randomized");
  CHECK(arma::approx_equal(a.eigenvalues, again.eigenvalues, "absdiff", 0.0));
  CHECK_FALSE(arma::approx_equal(a.eigenvalues, b.eigenvalues, "absdiff", 0.0));
  CHECK(arma::approx_equal(a.eigenvalues, b.eigenvalues, "reldiff", 1e-3));
}

TEST_CASE("derive: the season's days and their consecutive flags") {
  std::vector<Date> dates;
  for (int y : {2001, 2002})
    for (int m = 1; m <= 12; ++m) dates.push_back(make_date(y, m, 1, Calendar::Standard));
  // Monthly dates are never consecutive; a winter of 1 Dec and 1 Jan neither.
  CHECK_THROWS_AS(select_season(dates, {12, 1, 2}), NumericalError);  // 6 days < 10
  std::vector<Date> days;
  for (int d = 1; d <= 20; ++d) days.push_back(make_date(2001, 1, d, Calendar::Standard));
  for (int d = 1; d <= 5; ++d) days.push_back(make_date(2001, 2, d, Calendar::Standard));
  const Season s = select_season(days, {1});
  CHECK(s.size() == 20);
  CHECK(s.days.front() == 0);
  CHECK(s.days.back() == 19);
  CHECK(s.in_season[19] == 1);
  CHECK(s.in_season[20] == 0);
  CHECK(s.next[0] == 0);
  CHECK(s.next[1] == 1);
}

TEST_CASE("derive: patterns are the mean anomaly of each regime's season days without no-regime days") {
  std::vector<Date> dates;
  for (int d = 1; d <= 12; ++d) dates.push_back(make_date(2001, 1, d, Calendar::Standard));
  for (int d = 1; d <= 3; ++d) dates.push_back(make_date(2001, 2, d, Calendar::Standard));  // out of season
  const Season season = select_season(dates, {1});
  Field f;
  f.grid.lat = {40.0};
  f.grid.lon = {0.0, 10.0};
  f.dates = dates;
  f.values.set_size(2, 15);
  for (arma::uword t = 0; t < 15; ++t) {
    f.values(0, t) = float(t);
    f.values(1, t) = -float(t);
  }
  std::vector<int> labels(15, 0);
  for (int t = 6; t < 15; ++t) labels[t] = 1;
  labels[5] = -1;  // no regime: in no composite
  const arma::mat p = regime_patterns(f, season, labels, 2);
  CHECK(p(0, 0) == doctest::Approx(2.0));  // mean of 0..4 (day 5 has no regime)
  CHECK(p(1, 1) == doctest::Approx(-8.5)); // minus the mean of 6..11 (February is out of season)
  CHECK_THROWS_AS(regime_patterns(f, season, std::vector<int>(12, 0), 2), InternalError);
  labels[3] = 2;
  CHECK_THROWS_AS(regime_patterns(f, season, labels, 2), InternalError);
  labels[3] = -2;
  CHECK_THROWS_AS(regime_patterns(f, season, labels, 2), InternalError);
}

TEST_CASE("derive: regime statistics count only each regime's own days and no regime ends a run") {
  std::vector<Date> dates;
  for (int d = 1; d <= 10; ++d) dates.push_back(make_date(2001, 1, d, Calendar::Standard));
  const Season season = select_season(dates, {1});
  RegimeModel m;
  m.centroids.zeros(1, 2);
  m.labels = {0, 0, -1, 0, 1, 1, -1, -1, 1, 1};
  regime_statistics(season, {"first", "second"}, m);
  REQUIRE(m.regimes.size() == 2);
  CHECK(m.regimes[0].frequency == doctest::Approx(3.0 / 10));
  CHECK(m.regimes[0].mean_run == doctest::Approx(1.5));  // runs of 2 and 1: the no-regime day splits them
  CHECK(m.regimes[0].longest_run == 2);
  CHECK(m.regimes[1].frequency == doctest::Approx(4.0 / 10));
  CHECK(m.regimes[1].mean_run == doctest::Approx(2.0));
  CHECK(m.transition_counts(0, 2) == 1);  // R1 -> no regime
  CHECK(m.transition_counts(2, 0) == 1);  // no regime -> R1
  CHECK(m.transition_counts(2, 2) == 1);
}
