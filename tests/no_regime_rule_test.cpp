// The no-regime rule (issue 11): the correlation that decides "no regime",
// over the full area-weighted field (format version 2 models) or in the
// truncated EOF space (version 1 models), computed by the labeller that
// derive, classify and verify share, against a direct computation over a
// small grid; and the full-field norm of running-mean fields against
// smoothing the fields themselves.
#include <doctest/doctest.h>

#include <cmath>

#include "isohypse/numerics/climatology.hpp"
#include "isohypse/numerics/labeller.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/numerics/regime_model.hpp"

using namespace isohypse;

namespace {

// A model on a 5 x 6 grid with 3 orthonormal EOFs (a truncation: most of
// the field lies outside their span), a non-zero EOF mean and 2 regimes.
RegimeModel small_model(NoRegimeRule rule) {
  arma::arma_rng::set_seed(11);
  RegimeModel m;
  m.grid.lat = arma::linspace(30.0, 70.0, 5);
  m.grid.lon = arma::linspace(0.0, 50.0, 6);
  m.weights = m.grid.sqrt_cos_weights();
  m.eof_mean = 5.0 * arma::randn<arma::vec>(m.grid.n_points());
  arma::mat q, r;
  arma::qr_econ(q, r, arma::randn<arma::mat>(m.grid.n_points(), 3));
  m.eofs = q;
  m.centroids = {{80.0, -60.0}, {-30.0, 40.0}, {20.0, 10.0}};  // n_eof x k
  m.no_regime_threshold = 0.25;
  m.no_regime_rule = rule;
  m.regimes.resize(2);
  return m;
}

// The weighted, centred field of one day as the labeller forms it (anomaly
// and weight in float, centred in double).
arma::vec weighted(const RegimeModel& m, const arma::fvec& anomaly) {
  const arma::fvec wf = arma::conv_to<arma::fvec>::from(m.weights);
  return arma::conv_to<arma::vec>::from(arma::fvec(anomaly % wf)) - m.eof_mean;
}

struct Direct {
  int nearest = 0;
  double full_field = 0, eof_space = 0;
};

// The correlations computed over the grid: y against the pattern E c of the
// nearest centroid, and pc against c.
Direct direct(const RegimeModel& m, const arma::vec& y) {
  const arma::vec pc = m.eofs.t() * y;
  Direct d;
  double best = arma::datum::inf;
  for (int j = 0; j < m.k(); ++j) {
    const double dist = arma::accu(arma::square(pc - m.centroids.col(j)));
    if (dist < best) best = dist, d.nearest = j;
  }
  const arma::vec c = m.centroids.col(d.nearest), pattern = m.eofs * c;
  d.full_field = arma::dot(y, pattern) / (arma::norm(y) * arma::norm(pattern));
  d.eof_space = arma::dot(pc, c) / (arma::norm(pc) * arma::norm(c));
  return d;
}

// A day whose field is the first regime's pattern plus a part outside the
// EOFs' span of `outside` times its size: in EOF space it correlates 1 with
// the regime, over the full field 1 / sqrt(1 + outside^2).
arma::fvec pattern_plus_outside(const RegimeModel& m, double outside) {
  const arma::vec pattern = m.eofs * m.centroids.col(0);
  arma::vec z = arma::randn<arma::vec>(m.grid.n_points());
  z -= m.eofs * (m.eofs.t() * z);
  z *= outside * arma::norm(pattern) / arma::norm(z);
  return arma::conv_to<arma::fvec>::from((pattern + z + m.eof_mean) / m.weights);
}

std::vector<Date> dates_with_gaps(int n) {
  std::vector<Date> dates;
  Date d = make_date(2001, 1, 1);
  for (int t = 0; t < n; ++t) {
    dates.push_back(d);
    d = add_days(d, (t % 97 == 50 || t == 300) ? 3 : 1);  // gaps, one near the 256-day block boundary
  }
  return dates;
}

}  // namespace

TEST_CASE("no regime: the full-field correlation equals the area-weighted correlation over the grid") {
  const RegimeModel m = small_model(NoRegimeRule::FullField);
  arma::fmat x = 40.0f * arma::randn<arma::fmat>(m.grid.n_points(), 30);
  x.col(0) = pattern_plus_outside(m, 3.0);  // 1 / sqrt(10) = 0.316: a regime
  x.col(1) = pattern_plus_outside(m, 5.0);  // 1 / sqrt(26) = 0.196: no regime, though 1 in EOF space
  RegimeLabeller labeller(m);
  arma::vec cor;
  const std::vector<int> labels = labeller.label(x, &cor);
  int smaller = 0;
  for (arma::uword t = 0; t < x.n_cols; ++t) {
    const arma::vec y = weighted(m, x.col(t));
    const Direct d = direct(m, y);
    CHECK(cor(t) == doctest::Approx(d.full_field).epsilon(1e-10));
    CHECK(labeller.field_norms()(t) == doctest::Approx(arma::norm(y)).epsilon(1e-12));
    CHECK(labels[t] == (d.full_field >= 0.25 ? d.nearest : m.k()));
    smaller += std::abs(d.full_field) < std::abs(d.eof_space) - 1e-6;
  }
  CHECK(smaller == 30);  // the truncation leaves out part of every field
  CHECK(cor(0) == doctest::Approx(1.0 / std::sqrt(10.0)).epsilon(1e-6));
  CHECK(labels[0] == 0);
  CHECK(cor(1) == doctest::Approx(1.0 / std::sqrt(26.0)).epsilon(1e-6));
  CHECK(labels[1] == m.k());
}

TEST_CASE("no regime: a version 1 model keeps the EOF-space correlation") {
  const RegimeModel m = small_model(NoRegimeRule::EofSpace);
  arma::fmat x = 40.0f * arma::randn<arma::fmat>(m.grid.n_points(), 20);
  x.col(1) = pattern_plus_outside(m, 5.0);
  RegimeLabeller labeller(m);
  arma::vec cor;
  const std::vector<int> labels = labeller.label(x, &cor);
  for (arma::uword t = 0; t < x.n_cols; ++t) {
    const Direct d = direct(m, weighted(m, x.col(t)));
    CHECK(cor(t) == doctest::Approx(d.eof_space).epsilon(1e-10));
    CHECK(labels[t] == (d.eof_space >= 0.25 ? d.nearest : m.k()));
  }
  CHECK(cor(1) == doctest::Approx(1.0).epsilon(1e-9));
  CHECK(labels[1] == 0);
}

TEST_CASE("no regime: assign_regimes refuses field norms of another length under the full-field rule") {
  const RegimeModel m = small_model(NoRegimeRule::FullField);
  const arma::mat pcs(4, 3, arma::fill::ones);
  std::vector<int> labels;
  arma::vec cor;
  CHECK_THROWS_AS(assign_regimes(m, pcs, arma::vec(3, arma::fill::ones), labels, cor), InternalError);
  assign_regimes(m, pcs, arma::vec{0.0, 1e9, 2.0, 2.0}, labels, cor);
  CHECK(cor(0) == 0.0);  // a zero field correlates with nothing
  CHECK(labels[0] == -1);
  CHECK(labels[1] == -1);
  const RegimeModel v1 = small_model(NoRegimeRule::EofSpace);
  assign_regimes(v1, pcs, arma::vec(), labels, cor);  // the EOF-space rule needs no norms
  const arma::vec c = v1.centroids.col(1);              // (-60, 40, 10) is nearer to (1, 1, 1)
  CHECK(cor(1) == doctest::Approx(arma::accu(c) / (std::sqrt(3.0) * arma::norm(c))));
}

TEST_CASE("no regime: the running-mean field norm equals the norm of the smoothed fields") {
  const RegimeModel m = small_model(NoRegimeRule::FullField);
  const int n = 600;  // three blocks of the labeller, with date gaps
  const std::vector<Date> dates = dates_with_gaps(n);
  // Persistent anomalies (a random walk), so that smoothing keeps much of them.
  arma::fmat x = arma::cumsum(10.0f * arma::randn<arma::fmat>(m.grid.n_points(), n), 1);
  const arma::fmat reference = 3.0f * arma::randn<arma::fmat>(m.grid.n_points(), n);
  for (int days : {2, 5}) {
    RegimeLabeller labeller(m);
    arma::vec cor;
    const std::vector<int> labels = labeller.label(x, reference, dates, days, &cor);
    arma::mat y(m.grid.n_points(), n);
    for (int t = 0; t < n; ++t) y.col(t) = weighted(m, arma::fvec(x.col(t) - reference.col(t)));
    running_mean(y, dates, days);
    for (int t = 0; t < n; ++t) {
      const Direct d = direct(m, y.col(t));
      CHECK(labeller.field_norms()(t) == doctest::Approx(arma::norm(y.col(t))).epsilon(1e-9));
      CHECK(cor(t) == doctest::Approx(d.full_field).epsilon(1e-8));
      if (std::abs(d.full_field - 0.25) > 1e-6) CHECK(labels[t] == (d.full_field >= 0.25 ? d.nearest : m.k()));
    }
  }
}

TEST_CASE("no regime: running-mean windows stay within runs of consecutive days") {
  std::vector<Date> dates;
  for (int d : {1, 2, 3, 4, 5, 8, 9}) dates.push_back(make_date(2001, 1, d));
  const std::vector<MeanWindow> w = running_mean_windows(dates, 5);
  CHECK(w[0].lo == 0);
  CHECK(w[0].hi == 2);
  CHECK(w[2].lo == 0);
  CHECK(w[2].hi == 4);
  CHECK(w[4].lo == 2);
  CHECK(w[4].hi == 4);  // 2001-01-08 is not the next day
  CHECK(w[5].lo == 5);
  CHECK(w[5].hi == 6);
  const std::vector<MeanWindow> one = running_mean_windows(dates, 1);
  CHECK(one[3].lo == 3);
  CHECK(one[3].hi == 3);
}
