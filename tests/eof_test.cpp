#include <doctest/doctest.h>

#include <cmath>
#include <string>

#include "isohypse/numerics/eof.hpp"
#include "isohypse/base/error.hpp"

using namespace isohypse;

namespace {

// METHODS.md section 2: time x space X = [[2,0],[0,1],[-2,-1]], here
// transposed to the library's n_space x n_time.
arma::fmat three_day_example() { return {{2.0f, 0.0f, -2.0f}, {0.0f, 1.0f, -1.0f}}; }

std::vector<char> all_consecutive(arma::uword n) {
  std::vector<char> c(n, 1);
  c[0] = 0;
  return c;
}

EofOptions with(EofOptions::Method method, int count = 0, double fraction = 0.8) {
  EofOptions o;
  o.method = method;
  o.count = count;
  o.variance_fraction = fraction;
  return o;
}

}  // namespace

TEST_CASE("EOFs of the 3-day example of METHODS.md section 2") {
  // Eigenvalues of [[4,1],[1,1]]: (5 +- sqrt(13)) / 2 = 4.302776, 0.697224;
  // singular values of X sqrt(2 lambda) = 2.933522, 1.180868.
  for (auto method : {EofOptions::Method::Exact, EofOptions::Method::Randomized}) {
    const EofResult r = compute_eofs(three_day_example(), all_consecutive(3), with(method, 2));
    CAPTURE(r.method);
    CHECK(r.method == (method == EofOptions::Method::Exact ? "exact" : "randomized"));
    REQUIRE(r.eofs.n_cols == 2);
    CHECK(r.mean[0] == doctest::Approx(0.0));
    CHECK(r.mean[1] == doctest::Approx(0.0));
    CHECK(r.total_variance == doctest::Approx(5.0));
    CHECK(r.eigenvalues[0] == doctest::Approx(4.302776).epsilon(1e-6));
    CHECK(r.eigenvalues[1] == doctest::Approx(0.697224).epsilon(1e-6));
    CHECK(r.explained[0] == doctest::Approx(0.860555).epsilon(1e-6));
    CHECK(std::sqrt(r.eigenvalues[0] * 2.0) == doctest::Approx(2.933522).epsilon(1e-6));
    CHECK(std::sqrt(r.eigenvalues[1] * 2.0) == doctest::Approx(1.180868).epsilon(1e-6));
    // Sign convention: largest loading positive, so EOF1 = +(0.957092, 0.289784).
    CHECK(r.eofs(0, 0) == doctest::Approx(0.957092).epsilon(1e-6));
    CHECK(r.eofs(1, 0) == doctest::Approx(0.289784).epsilon(1e-6));
    // PCs = Xc^T eofs (the randomized method's products run in float), and
    // projecting the same data reproduces them.
    const arma::mat X = arma::conv_to<arma::mat>::from(three_day_example());
    CHECK(arma::approx_equal(r.pcs, X.t() * r.eofs, "absdiff", 1e-6));
    CHECK(arma::approx_equal(project_onto_eofs(three_day_example(), r.mean, r.eofs), r.pcs,
                             "absdiff", 1e-6));
  }
}

TEST_CASE("EOF count from the variance fraction in the 3-day example") {
  CHECK(compute_eofs(three_day_example(), all_consecutive(3), with(EofOptions::Method::Exact, 0, 0.8))
            .eofs.n_cols == 1);
  CHECK(compute_eofs(three_day_example(), all_consecutive(3), with(EofOptions::Method::Exact, 0, 0.9))
            .eofs.n_cols == 2);
  EofOptions capped = with(EofOptions::Method::Exact, 0, 0.9);
  capped.max_count = 1;
  CHECK(compute_eofs(three_day_example(), all_consecutive(3), capped).eofs.n_cols == 1);
}

TEST_CASE("North et al. (1982) error and Bretherton et al. (1999) effective sample sizes") {
  // METHODS.md section 2: lambda 4.302776, N = 100 -> 0.608504.
  CHECK(north_error(4.302776, 100.0) == doctest::Approx(0.608504).epsilon(1e-6));
  // Bretherton et al. 1999 (from memory): N = 900, r1 = 0.7 -> 158.82 (mean), 308.05 (variance).
  CHECK(effective_sample_size_mean(900.0, 0.7) == doctest::Approx(158.82).epsilon(1e-4));
  CHECK(effective_sample_size_variance(900.0, 0.7) == doctest::Approx(308.05).epsilon(1e-4));
}

TEST_CASE("lag-1 autocorrelation uses only consecutive days") {
  // Planted: constant within two-day seasons, sign flipping between seasons.
  // Within seasons the lag-1 products are all +1; across the breaks -1.
  const arma::vec x = {1, 1, -1, -1, 1, 1, -1, -1};
  const std::vector<char> seasons = {0, 1, 0, 1, 0, 1, 0, 1};
  CHECK(lag1_autocorrelation(x, seasons) == doctest::Approx(1.0));
  const std::vector<char> continuous = {0, 1, 1, 1, 1, 1, 1, 1};
  // Over all 7 pairs: (4 - 3) / 7 lagged products of unit variance.
  CHECK(lag1_autocorrelation(x, continuous) == doctest::Approx(1.0 / 7.0));
  CHECK(lag1_autocorrelation(x, std::vector<char>(8, 0)) == 0.0);
}

TEST_CASE("EOF effective sample size and North error follow the PC autocorrelation") {
  // Planted: one spatial pattern times a series of two-day seasons as above:
  // r1 = 1 gives no effective sample; a break every day gives N* = N.
  const arma::fvec pattern = {1.0f, 2.0f, 2.0f};
  const arma::frowvec series = {1, 1, -1, -1, 1, 1, -1, -1};
  const arma::fmat X = pattern * series;
  const EofResult within = compute_eofs(X, {0, 1, 0, 1, 0, 1, 0, 1}, with(EofOptions::Method::Exact, 1));
  CHECK(within.effective_n[0] == doctest::Approx(0.0));
  const EofResult apart = compute_eofs(X, std::vector<char>(8, 0), with(EofOptions::Method::Exact, 1));
  CHECK(apart.effective_n[0] == doctest::Approx(8.0));
  CHECK(apart.north_error[0] == doctest::Approx(apart.eigenvalues[0] * 0.5));
  CHECK(apart.explained[0] == doctest::Approx(1.0));
}

TEST_CASE("exact and randomized EOFs agree on a planted spectrum for wide and tall data") {
  // Planted: 6 orthogonal patterns with variances 2^-k, a mean, weak noise.
  for (auto [n_space, n_time] : {std::pair<arma::uword, arma::uword>{120, 80}, {80, 120}}) {
    arma::arma_rng::set_seed(7);
    arma::mat P, R, Q1, Q2;
    arma::qr_econ(Q1, R, arma::mat(arma::randn(n_space, 6)));
    arma::mat series = arma::randn(n_time, 6);
    series.each_row() -= arma::mean(series, 0);  // zero-mean PCs stay orthogonal after centring
    arma::qr_econ(Q2, R, series);
    const arma::vec s = arma::exp2(-arma::regspace(0.0, 5.0) / 2.0) * 30.0;
    P = Q1 * arma::diagmat(s) * Q2.t() + 0.001 * arma::randn(n_space, n_time) + 5.0;
    const arma::fmat X = arma::conv_to<arma::fmat>::from(P);
    const EofResult a = compute_eofs(X, all_consecutive(n_time), with(EofOptions::Method::Exact, 6));
    const EofResult b = compute_eofs(X, all_consecutive(n_time), with(EofOptions::Method::Randomized, 6));
    CHECK(arma::approx_equal(a.explained, b.explained, "absdiff", 1e-6));
    CHECK(arma::approx_equal(a.eofs, b.eofs, "absdiff", 1e-6));  // same sign convention
    CHECK(arma::approx_equal(a.pcs, b.pcs, "absdiff", 1e-4));
    CHECK(arma::approx_equal(arma::abs(a.eofs.t() * Q1), arma::eye(6, 6), "absdiff", 1e-3));
    CHECK(arma::accu(a.explained) > 0.999);
  }
}

TEST_CASE("EOF analysis refuses bad input with sizes in the message") {
  arma::fmat nan_data = three_day_example();
  nan_data(1, 1) = arma::datum::nan;
  CHECK_THROWS_AS(compute_eofs(nan_data, all_consecutive(3), {}), DataError);
  CHECK_THROWS_AS(compute_eofs(three_day_example().cols(0, 1), all_consecutive(2), {}),
                  NumericalError);
  CHECK_THROWS_AS(compute_eofs(three_day_example(), all_consecutive(2), {}), InternalError);
  try {
    compute_eofs(three_day_example(), all_consecutive(3), with(EofOptions::Method::Exact, 3));
    FAIL("expected NumericalError");
  } catch (const NumericalError& e) {
    const std::string m = e.what();
    CHECK(m.find("2 grid points") != std::string::npos);
    CHECK(m.find("3 days") != std::string::npos);
  }
  // Rank 1 data cannot give 2 EOFs.
  const arma::fmat rank_one = arma::fvec{1.0f, 2.0f} * arma::frowvec{1.0f, -1.0f, 0.0f, 2.0f};
  CHECK_THROWS_AS(compute_eofs(rank_one, all_consecutive(4), with(EofOptions::Method::Exact, 2)),
                  NumericalError);
  CHECK_THROWS_AS(project_onto_eofs(three_day_example(), arma::vec(3, arma::fill::zeros),
                                    arma::mat(2, 1, arma::fill::ones)),
                  InternalError);
}
