// Verification scores against worked values. Check values from
// ../shared/METHODS.md §6, which recomputed them as exact fractions from the
// formulas in Wilks (2011), Statistical Methods in the Atmospheric Sciences,
// 3rd ed.; each case names the original source.
#include <doctest/doctest.h>

#include <cmath>
#include <numeric>
#include <random>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/scores.hpp"

using namespace isohypse;

namespace {

// The ten-case example of METHODS §6.
const arma::vec kP = {1.0, 0.8, 0.8, 0.6, 0.4, 0.4, 0.2, 0.0, 0.6, 0.2};
const arma::vec kO = {1, 1, 0, 1, 0, 1, 0, 0, 0, 0};

// Mean of per-case values over the given case indices (a bootstrap statistic).
double mean_of(const std::vector<double>& values, const std::vector<std::size_t>& cases) {
  double sum = 0.0;
  for (std::size_t i : cases) sum += values[i];
  return sum / static_cast<double>(cases.size());
}

}  // namespace

TEST_CASE("scores: Brier score and Murphy decomposition of the worked example") {
  // Brier (1950), Mon. Wea. Rev. 78, 1-3; Murphy (1973), J. Appl. Meteor. 12,
  // 595-600, binned at the distinct forecast values: BS = REL - RES + UNC.
  CHECK(brier_score(kP, kO) == doctest::Approx(0.18).epsilon(1e-12));
  const BrierParts parts = brier_decomposition(kP, kO);
  CHECK(parts.brier == doctest::Approx(0.18).epsilon(1e-12));
  CHECK(parts.reliability == doctest::Approx(0.03).epsilon(1e-12));
  CHECK(parts.resolution == doctest::Approx(0.09).epsilon(1e-12));
  CHECK(parts.uncertainty == doctest::Approx(0.24).epsilon(1e-12));
  CHECK(parts.base_rate == doctest::Approx(0.4).epsilon(1e-12));
  CHECK(parts.reliability - parts.resolution + parts.uncertainty == doctest::Approx(parts.brier).epsilon(1e-12));
  // BSS against the sample climatology, whose Brier score is the uncertainty.
  CHECK(skill_score(parts.brier, parts.uncertainty) == doctest::Approx(0.25).epsilon(1e-12));
}

TEST_CASE("scores: Brier decomposition with bins") {
  // Bins that separate every distinct value reproduce the exact decomposition.
  const BrierParts fine = brier_decomposition(kP, kO, arma::vec{0.0, 0.1, 0.3, 0.5, 0.7, 0.9, 1.0});
  CHECK(fine.reliability == doctest::Approx(0.03).epsilon(1e-12));
  CHECK(fine.resolution == doctest::Approx(0.09).epsilon(1e-12));
  // Two bins [0, 0.5) and [0.5, 1], worked by hand from Murphy's (1973) terms:
  // low bin n 5, mean p 0.24, obs freq 0.2; high bin n 5, mean p 0.76, obs 0.6.
  // REL = (5 * 0.04^2 + 5 * 0.16^2) / 10 = 0.0136, RES = (5 * 0.2^2 * 2) / 10 = 0.04.
  const BrierParts coarse = brier_decomposition(kP, kO, arma::vec{0.0, 0.5, 1.0});
  CHECK(coarse.brier == doctest::Approx(0.18).epsilon(1e-12));
  CHECK(coarse.reliability == doctest::Approx(0.0136).epsilon(1e-12));
  CHECK(coarse.resolution == doctest::Approx(0.04).epsilon(1e-12));
  CHECK(coarse.uncertainty == doctest::Approx(0.24).epsilon(1e-12));
  // Stephenson, Coelho & Jolliffe (2008): the within-bin terms close the gap
  // (0.2136 vs 0.18). By hand: both bins have sum (p - pbar)^2 = 0.112, so
  // WBV = 0.0224; sum (o - obar)(p - pbar) is 0.16 low and 0.12 high, so
  // WBC = 2 * 0.28 / 10 = 0.056.
  CHECK(coarse.within_bin_variance == doctest::Approx(0.0224).epsilon(1e-12));
  CHECK(coarse.within_bin_covariance == doctest::Approx(0.056).epsilon(1e-12));
  CHECK(std::abs(coarse.reliability - coarse.resolution + coarse.uncertainty + coarse.within_bin_variance -
                 coarse.within_bin_covariance - coarse.brier) < 1e-12);
  // Grouping by distinct value has no within-group spread.
  CHECK(brier_decomposition(kP, kO).within_bin_variance == 0.0);
  CHECK(brier_decomposition(kP, kO).within_bin_covariance == 0.0);

  CHECK_THROWS_AS(brier_decomposition(kP, kO, arma::vec{0.0, 0.5, 0.5, 1.0}), InputError);
  CHECK_THROWS_AS(brier_decomposition(kP, kO, arma::vec{0.1, 1.0}), InputError);  // misses p = 0
  CHECK_THROWS_AS(brier_decomposition(kP, kO, arma::vec{0.5}), InputError);
}

// The five-term identity BS = REL - RES + UNC + WBV - WBC, to 1e-12.
static double identity_gap(const BrierParts& b) {
  return b.reliability - b.resolution + b.uncertainty + b.within_bin_variance - b.within_bin_covariance - b.brier;
}

TEST_CASE("scores: binned decomposition of the twelve-case example in five bins") {
  // METHODS §6 (numpy), after Stephenson, Coelho & Jolliffe (2008), Wea.
  // Forecasting 23, 752-757: bins [0,.2) [.2,.4) [.4,.6) [.6,.8) [.8,1].
  const arma::vec p = {.05, .12, .18, .33, .36, .41, .58, .62, .77, .93, .08, .27};
  const arma::vec o = {0, 0, 1, 0, 1, 0, 1, 1, 1, 1, 0, 0};
  const BrierParts b = binned_brier_decomposition(p, o, 5);
  CHECK(std::abs(b.brier - 0.152817) < 5e-7);
  CHECK(std::abs(b.reliability - 0.022730) < 5e-7);
  CHECK(std::abs(b.resolution - 0.090278) < 5e-7);
  CHECK(b.uncertainty == doctest::Approx(0.25).epsilon(1e-12));
  CHECK(std::abs(b.within_bin_variance - 0.003281) < 5e-7);
  CHECK(std::abs(b.within_bin_covariance - 0.032917) < 5e-7);
  CHECK(std::abs(identity_gap(b)) < 1e-12);
  // The same numbers as explicit edges.
  const BrierParts e = brier_decomposition(p, o, arma::vec{0.0, 0.2, 0.4, 0.6, 0.8, 1.0});
  CHECK(e.reliability == b.reliability);
  CHECK(e.within_bin_covariance == b.within_bin_covariance);
}

TEST_CASE("scores: binned decomposition of the ten-case example") {
  // METHODS §6: with ten bins of width 0.1 every distinct value (0, .2, .4,
  // .6, .8, 1) has a bin of its own, so the terms are Murphy's (1973):
  // BS 0.18, REL 0.03, RES 0.09, UNC 0.24, and no within-bin term.
  const BrierParts b = binned_brier_decomposition(kP, kO);
  CHECK(b.brier == doctest::Approx(0.18).epsilon(1e-12));
  CHECK(b.reliability == doctest::Approx(0.03).epsilon(1e-12));
  CHECK(b.resolution == doctest::Approx(0.09).epsilon(1e-12));
  CHECK(b.uncertainty == doctest::Approx(0.24).epsilon(1e-12));
  CHECK(std::abs(b.within_bin_variance) < 1e-15);
  CHECK(std::abs(b.within_bin_covariance) < 1e-15);
  CHECK(skill_score(b.brier, b.uncertainty) == doctest::Approx(0.25).epsilon(1e-12));
  CHECK_THROWS_AS(binned_brier_decomposition(kP, kO, 1), InputError);
  CHECK_THROWS_AS(binned_brier_decomposition(kP, kO, 0), InputError);
}

TEST_CASE("scores: the five-term identity holds on random forecasts") {
  arma::arma_rng::set_seed(20081);
  for (int trial = 0; trial < 50; ++trial) {
    const arma::uword n = 1 + static_cast<arma::uword>(trial) * 37;
    const arma::vec p = arma::randu<arma::vec>(n);
    const arma::vec o = arma::conv_to<arma::vec>::from(arma::randu<arma::vec>(n) < p);
    for (int bins : {2, 3, 10, 17}) {
      CAPTURE(trial);
      CAPTURE(bins);
      const BrierParts b = binned_brier_decomposition(p, o, bins);
      CHECK(std::abs(identity_gap(b)) < 1e-12);
      CHECK(b.reliability >= 0.0);
      CHECK(b.resolution >= 0.0);
      CHECK(b.within_bin_variance >= 0.0);
    }
  }
}

TEST_CASE("scores: consistency bars of a reliability diagram") {
  // Broecker & Smith (2007), Wea. Forecasting 22, 651-661: the bar is where a
  // reliable forecast's observed frequency falls. A bin of 200 cases all at
  // p = 0.3: the frequency is Binomial(200, 0.3) / 200, sd 0.0324, so the
  // 5-95 % range is about 0.3 -+ 1.645 sd = 0.247 .. 0.353.
  arma::vec p(200, arma::fill::value(0.3));
  arma::vec o(200, arma::fill::zeros);
  o.head(60).ones();
  const auto bins = reliability_diagram_with_bars(p, o, 10, 2000, 0.9, 7);
  REQUIRE(bins.size() == 10);
  CHECK(bins[3].count == 200);
  CHECK(std::abs(bins[3].bar_lower - 0.247) < 0.012);
  CHECK(std::abs(bins[3].bar_upper - 0.353) < 0.012);
  CHECK(bins[3].bar_lower <= bins[3].observed_frequency);
  CHECK(bins[3].observed_frequency <= bins[3].bar_upper);
  CHECK(std::isnan(bins[0].bar_lower));  // empty bin: no bar
  CHECK(std::isnan(bins[0].bar_upper));
  // The counts and frequencies are reliability_diagram's; bars are seeded.
  const auto plain = reliability_diagram(kP, kO, 5);
  const auto a = reliability_diagram_with_bars(kP, kO, 5, 500, 0.9, 11);
  const auto b = reliability_diagram_with_bars(kP, kO, 5, 500, 0.9, 11);
  for (std::size_t k = 0; k < 5; ++k) {
    CAPTURE(k);
    CHECK(a[k].count == plain[k].count);
    CHECK(a[k].observed_frequency == plain[k].observed_frequency);
    CHECK(std::isnan(plain[k].bar_lower));
    CHECK(a[k].bar_lower == b[k].bar_lower);
    CHECK(a[k].bar_upper == b[k].bar_upper);
    CHECK(a[k].bar_lower <= a[k].bar_upper);
  }
  // p = 0 and p = 1 can only give 0 and 1: a bar of zero width.
  CHECK(a[0].bar_lower == 0.0);
  CHECK(a[0].bar_upper == 0.0);
  CHECK_THROWS_AS(reliability_diagram_with_bars(kP, kO, 5, 0, 0.9, 1), InputError);
  CHECK_THROWS_AS(reliability_diagram_with_bars(kP, kO, 5, 100, 1.0, 1), InputError);
}

TEST_CASE("scores: perfect and climatological forecasts") {
  const arma::vec o = {1, 0, 0, 0, 1, 0, 0, 0};  // base rate 0.25
  const BrierParts perfect = brier_decomposition(o, o);
  CHECK(perfect.brier == 0.0);
  CHECK(skill_score(perfect.brier, perfect.uncertainty) == 1.0);
  CHECK(roc_area(o, o) == 1.0);

  // Always the climatological frequency: BS equals the uncertainty, so its
  // skill against that climatology is 0, with no reliability or resolution.
  const arma::vec clim(o.n_elem, arma::fill::value(0.25));
  const BrierParts c = brier_decomposition(clim, o);
  CHECK(c.brier == doctest::Approx(0.1875).epsilon(1e-14));
  CHECK(skill_score(c.brier, c.uncertainty) == doctest::Approx(0.0).epsilon(1e-14));
  CHECK(c.reliability == 0.0);
  CHECK(c.resolution == 0.0);
  CHECK(roc_area(clim, o) == 0.5);  // one tie for every pair

  CHECK(std::isnan(skill_score(0.1, 0.0)));
  CHECK(skill_score(0.3, 0.2) == doctest::Approx(-0.5));
}

TEST_CASE("scores: input contracts of the binary scores") {
  const arma::vec p3 = {0.1, 0.2, 0.3};
  const arma::vec o2 = {0, 1};
  try {
    brier_score(p3, o2);
    FAIL("expected InternalError");
  } catch (const InternalError& e) {
    const std::string what = e.what();
    CHECK(what.find("3 probabilities") != std::string::npos);
    CHECK(what.find("2 outcomes") != std::string::npos);
  }
  CHECK_THROWS_AS(brier_score(arma::vec{}, arma::vec{}), InternalError);
  CHECK_THROWS_AS(brier_score(arma::vec{1.2}, arma::vec{1}), InputError);
  CHECK_THROWS_AS(brier_score(arma::vec{arma::datum::nan}, arma::vec{1}), InputError);
  CHECK_THROWS_AS(roc_area(arma::vec{0.5}, arma::vec{0.5}), InputError);
  CHECK_THROWS_AS(reliability_diagram(p3, arma::vec{0, 1, 1}, 0), InputError);
}

TEST_CASE("scores: ROC area as Mann-Whitney with ties counted half") {
  // Mason & Graham (2002), QJRMS 128, 2145-2166: 13 of 16 (event, non-event)
  // pairs ranked correctly, ties half -> 0.8125; ROC skill 2A - 1 = 0.625.
  const double area = roc_area(kP, kO);
  CHECK(area == doctest::Approx(0.8125).epsilon(1e-14));
  CHECK(2.0 * area - 1.0 == doctest::Approx(0.625).epsilon(1e-14));
  // Reversed forecasts swap the roles: 1 - A.
  CHECK(roc_area(1.0 - kP, kO) == doctest::Approx(0.1875).epsilon(1e-14));
  CHECK(std::isnan(roc_area(kP, arma::vec(kP.n_elem, arma::fill::zeros))));
  CHECK(std::isnan(roc_area(kP, arma::vec(kP.n_elem, arma::fill::ones))));
}

TEST_CASE("scores: multi-category Brier score") {
  // METHODS §6 (sum_k (p_k - o_k)^2, Wilks 2011 ch. 8): (0.5, 0.3, 0.1, 0.1)
  // with the second category observed (0-based label 1) -> 0.76; uniform -> 0.75.
  CHECK(multicategory_brier(arma::rowvec{0.5, 0.3, 0.1, 0.1}, 1) == doctest::Approx(0.76).epsilon(1e-14));
  CHECK(multicategory_brier(arma::rowvec{0.25, 0.25, 0.25, 0.25}, 1) == doctest::Approx(0.75).epsilon(1e-14));
  CHECK(multicategory_brier(arma::rowvec{0.0, 1.0, 0.0}, 1) == 0.0);
  CHECK(multicategory_brier(arma::rowvec{1.0, 0.0, 0.0}, 1) == 2.0);

  const arma::mat p = {{0.5, 0.3, 0.1, 0.1}, {0.25, 0.25, 0.25, 0.25}};
  CHECK(mean_multicategory_brier(p, {1, 3}) == doctest::Approx((0.76 + 0.75) / 2).epsilon(1e-14));
  // Skill of the first forecast against the uniform one: 1 - 0.76/0.75.
  CHECK(skill_score(0.76, 0.75) == doctest::Approx(-1.0 / 75.0).epsilon(1e-12));

  CHECK_THROWS_AS(multicategory_brier(arma::rowvec{0.5, 0.5}, 2), InputError);
  CHECK_THROWS_AS(multicategory_brier(arma::rowvec{0.5, 0.5}, -1), InputError);
  CHECK_THROWS_AS(multicategory_brier(arma::rowvec{}, 0), InternalError);
  CHECK_THROWS_AS(mean_multicategory_brier(p, {1}), InternalError);
  CHECK_THROWS_AS(mean_multicategory_brier(p, {1, 4}), InputError);
}

TEST_CASE("scores: reliability diagram") {
  // Five bins of width 0.2 over the worked example; 0.6 starts bin 3.
  const auto bins = reliability_diagram(kP, kO, 5);
  REQUIRE(bins.size() == 5);
  const std::size_t counts[] = {1, 2, 2, 2, 3};
  const double mean_p[] = {0.0, 0.2, 0.4, 0.6, 2.6 / 3.0};
  const double freq[] = {0.0, 0.0, 0.5, 0.5, 2.0 / 3.0};
  for (std::size_t b = 0; b < 5; ++b) {
    CAPTURE(b);
    CHECK(bins[b].lower == doctest::Approx(0.2 * static_cast<double>(b)));
    CHECK(bins[b].upper == doctest::Approx(0.2 * static_cast<double>(b + 1)));
    CHECK(bins[b].count == counts[b]);
    CHECK(bins[b].mean_forecast == doctest::Approx(mean_p[b]).epsilon(1e-12));
    CHECK(bins[b].observed_frequency == doctest::Approx(freq[b]).epsilon(1e-12));
  }
  // Default ten bins: p = 1 goes into the closed last bin, 0.1-0.2 is empty.
  const auto ten = reliability_diagram(kP, kO);
  REQUIRE(ten.size() == 10);
  CHECK(ten[9].count == 1);
  CHECK(ten[9].observed_frequency == 1.0);
  CHECK(ten[1].count == 0);
  CHECK(std::isnan(ten[1].mean_forecast));
  CHECK(std::isnan(ten[1].observed_frequency));
  std::size_t total = 0;
  for (const auto& b : ten) total += b.count;
  CHECK(total == kP.n_elem);
}

TEST_CASE("scores: Heidke skill, frequency bias and proportion correct") {
  // METHODS §6 (Wilks 2011, ch. 8.3): HSS = 69/124, biases 31/30, 1, 0.95, 1.
  const arma::umat table = {{20, 6, 3, 2}, {4, 15, 4, 2}, {3, 3, 12, 1}, {3, 1, 1, 20}};
  CHECK(proportion_correct(table) == doctest::Approx(0.67).epsilon(1e-14));
  CHECK(heidke_skill(table) == doctest::Approx(69.0 / 124.0).epsilon(1e-12));
  CHECK(heidke_skill(table) == doctest::Approx(0.556452).epsilon(1e-6));
  const arma::vec bias = frequency_bias(table);
  REQUIRE(bias.n_elem == 4);
  CHECK(bias[0] == doctest::Approx(1.033333).epsilon(1e-6));
  CHECK(bias[1] == doctest::Approx(1.0).epsilon(1e-14));
  CHECK(bias[2] == doctest::Approx(0.95).epsilon(1e-14));
  CHECK(bias[3] == doctest::Approx(1.0).epsilon(1e-14));

  // A perfect categorical forecast scores 1; one category everywhere is NaN.
  CHECK(heidke_skill(arma::umat{{5, 0, 0}, {0, 3, 0}, {0, 0, 2}}) == doctest::Approx(1.0));
  CHECK(std::isnan(heidke_skill(arma::umat{{4, 0}, {0, 0}})));
  const arma::vec b = frequency_bias(arma::umat{{1, 1}, {0, 0}});  // category 1 observed once, never forecast
  CHECK(b[0] == 2.0);
  CHECK(b[1] == 0.0);
  CHECK(std::isinf(frequency_bias(arma::umat{{1, 0}, {1, 0}})[1]));

  CHECK_THROWS_AS(heidke_skill(arma::umat(2, 3, arma::fill::ones)), InternalError);
  CHECK_THROWS_AS(proportion_correct(arma::umat(2, 2, arma::fill::zeros)), InternalError);
}

TEST_CASE("scores: contingency table orientation and checks") {
  // Rows forecast, columns observed: forecast 0 observed 2 lands at (0, 2).
  const arma::umat t = contingency({0, 0, 1, 2, 2}, {2, 0, 1, 2, 1}, 3);
  const arma::uword expected[3][3] = {{1, 0, 1}, {0, 1, 0}, {0, 1, 1}};
  REQUIRE(t.n_rows == 3);
  REQUIRE(t.n_cols == 3);
  for (arma::uword i = 0; i < 3; ++i) {
    for (arma::uword j = 0; j < 3; ++j) CHECK(t(i, j) == expected[i][j]);
  }
  CHECK(proportion_correct(t) == doctest::Approx(0.6));
  CHECK_THROWS_AS(contingency({0, 1}, {0}, 2), InternalError);
  CHECK_THROWS_AS(contingency({}, {}, 2), InternalError);
  CHECK_THROWS_AS(contingency({0, 2}, {0, 1}, 2), InputError);
  CHECK_THROWS_AS(contingency({0, 1}, {0, -1}, 2), InputError);
  CHECK_THROWS_AS(contingency({0}, {0}, 0), InputError);
}

// The mean of the binned reliability term under a reliable forecast, worked
// by hand from var(obar_k) = (1/n_k^2) sum_(i, j in k, same event) (min(p_i, p_j) - p_i p_j)
// (own derivation; with independent cases the bias that Ferro & Fricker 2012,
// Q. J. R. Meteorol. Soc. 138, 1954-1960, correct for).
TEST_CASE("scores: the reliability term that sampling alone gives a reliable forecast") {
  // Two bins of width 0.5: {0.2, 0.4} and {0.6, 0.8}; N = 4.
  const arma::vec p = {0.2, 0.4, 0.6, 0.8};
  // Independent: (1/4) [(0.16 + 0.24) / 2 + (0.24 + 0.16) / 2] = 0.1.
  CHECK(reliable_reliability(p, 2, 0, 0.9, 1).mean == doctest::Approx(0.1).epsilon(1e-14));
  // Cases 0 and 1 one event: bin 0 adds 2 (min(0.2, 0.4) - 0.08) = 0.24, so (1/4) [(0.4 + 0.24) / 2 + 0.4 / 2] = 0.13.
  CHECK(reliable_reliability(p, 2, 0, 0.9, 1, {7, 7, 8, 9}).mean == doctest::Approx(0.13).epsilon(1e-14));
  // Events in different bins add nothing: cases 1 and 2 share one.
  CHECK(reliable_reliability(p, 2, 0, 0.9, 1, {1, 5, 5, 3}).mean == doctest::Approx(0.1).epsilon(1e-14));
  CHECK(std::isnan(reliable_reliability(p, 2, 0, 0.9, 1).upper));

  // The redraws agree with the exact mean, and their 90 % quantile covers
  // the REL of simulated reliable forecasts about 90 % of the time.
  std::mt19937_64 rng(20261203);
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  arma::vec q(300);
  std::vector<std::int64_t> day(q.n_elem);
  for (arma::uword i = 0; i < q.n_elem; ++i) {
    q[i] = unit(rng);
    day[i] = static_cast<std::int64_t>(i / 3);  // three cases per valid date, as leads 1-3 of daily issues
  }
  const ReliabilityFloor f = reliable_reliability(q, 10, 4000, 0.9, 11, day);
  int covered = 0;
  const int trials = 400;
  double mean_rel = 0;
  for (int t = 0; t < trials; ++t) {
    arma::vec o(q.n_elem);
    double u = 0;
    for (arma::uword i = 0; i < q.n_elem; ++i) {
      if (i % 3 == 0) u = unit(rng);  // one outcome per valid date
      o[i] = u < q[i] ? 1.0 : 0.0;
    }
    const double rel = binned_brier_decomposition(q, o, 10).reliability;
    mean_rel += rel / trials;
    covered += rel <= f.upper;
  }
  CHECK(mean_rel == doctest::Approx(f.mean).epsilon(0.08));
  CHECK(covered >= 0.85 * trials);
  CHECK(covered <= 0.95 * trials);
  CHECK_THROWS_AS(reliable_reliability(arma::vec(), 10, 0, 0.9, 1), InputError);
  CHECK_THROWS_AS(reliable_reliability(p, 2, 0, 0.9, 1, {1, 2}), InputError);
  CHECK_THROWS_AS(reliable_reliability(p, 1, 0, 0.9, 1), InputError);
}
