#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <string>
#include <thread>

#include "isohypse/numerics/classifiability.hpp"
#include "isohypse/base/error.hpp"

using namespace isohypse;

TEST_CASE("classifiability index of METHODS.md section 3 (Michelangeli et al. 1995)") {
  // Centroids as columns: P1 = {(1,0),(0,1)}, P2 = {(1,0),(0.6,0.8)},
  // P3 = {(0.96,0.28),(0,1)}, P4 = {(0.8,-0.6),(0,1)}.
  const std::vector<arma::mat> sets = {{{1, 0}, {0, 1}},
                                       {{1, 0.6}, {0, 0.8}},
                                       {{0.96, 0}, {0.28, 1}},
                                       {{0.8, 0}, {-0.6, 1}}};
  const ClassifiabilityResult r = classifiability(sets);
  CHECK(r.index == doctest::Approx(9.52 / 12.0));
  CHECK(r.index == doctest::Approx(0.793333).epsilon(1e-6));
  const arma::vec row_sums = arma::sum(r.similarity, 1) - 1.0;
  CHECK(row_sums[0] == doctest::Approx(2.56));
  CHECK(row_sums[1] == doctest::Approx(2.40));
  CHECK(row_sums[2] == doctest::Approx(2.36));
  CHECK(row_sums[3] == doctest::Approx(2.20));
  CHECK(r.best == 0);
  // A(P1, P2) = min(max(1, 0.6), max(0, 0.8)) = 0.8 by the definition.
  CHECK(partition_similarity(sets[0], sets[1]) == doctest::Approx(0.8));
  CHECK(anomaly_correlation({1, 0}, {0.6, 0.8}) == doctest::Approx(0.6));
  CHECK_THROWS_AS(anomaly_correlation({0, 0}, {1, 0}), NumericalError);
  CHECK_THROWS_AS(classifiability({sets[0]}), InternalError);
}

namespace {

// Planted regimes: three centres at the corners of an equilateral triangle
// of radius 3 in the first two of 8 components (so k = 2 has no preferred
// merge), persistent 6-day episodes in 120-day seasons, unit noise in every
// component. One day per row, as EofResult::pcs.
arma::mat planted_regime_pcs(arma::uword n_days, std::vector<char>& consecutive) {
  arma::arma_rng::set_seed(21);
  const double pi = 3.141592653589793;
  const arma::uword dims = 8;
  arma::mat centres(dims, 3, arma::fill::zeros);
  for (int j = 0; j < 3; ++j) {
    centres(0, j) = 3.0 * std::cos(2.0 * pi * j / 3.0);
    centres(1, j) = 3.0 * std::sin(2.0 * pi * j / 3.0);
  }
  arma::mat pcs(n_days, dims);
  consecutive.assign(n_days, 1);
  int regime = 0;
  for (arma::uword t = 0; t < n_days; ++t) {
    if (t % 6 == 0) regime = static_cast<int>(arma::randi<arma::uvec>(1, arma::distr_param(0, 2))[0]);
    if (t % 120 == 0) consecutive[t] = 0;
    pcs.row(t) = centres.col(regime).t() + arma::randn<arma::rowvec>(dims);
  }
  return pcs;
}

}  // namespace

TEST_CASE("regime count: planted three regimes are significant against red noise") {
  std::vector<char> consecutive;
  const arma::mat pcs = planted_regime_pcs(600, consecutive);
  RegimeCountOptions o;
  o.k_min = 2;
  o.k_max = 5;
  o.runs = 10;
  o.surrogates = 10;
  o.threads = 1;
  const auto caller = std::this_thread::get_id();
  int calls = 0, last = 0;
  bool from_caller = true;
  const auto table = regime_count_table(pcs, consecutive, o, [&](int done, int total) {
    ++calls;
    last = done;
    from_caller = from_caller && std::this_thread::get_id() == caller && total == 44;
  });
  REQUIRE(table.size() == 4);
  CHECK(table[1].k == 3);
  CHECK(table[1].index > 0.99);
  CHECK(table[1].significant);
  CHECK_FALSE(table[0].significant);  // k = 2 merges a different pair each run
  CHECK(choose_regime_count(table) == 3);
  CHECK(calls == 44);  // 4 values of k x (data + 10 surrogates)
  CHECK(last == 44);
  CHECK(from_caller);

  o.threads = 2;
  bool two_from_caller = true;
  const auto table2 = regime_count_table(pcs, consecutive, o, [&](int, int) {
    two_from_caller = two_from_caller && std::this_thread::get_id() == caller;
  });
  CHECK(two_from_caller);
  for (std::size_t i = 0; i < table.size(); ++i) {
    CHECK(table2[i].index == table[i].index);
    CHECK(table2[i].surrogate_level == table[i].surrogate_level);
    CHECK(table2[i].best_run == table[i].best_run);
  }
}

TEST_CASE("choosing k: the largest significant index or an error listing the table") {
  std::vector<RegimeCountRow> table = {
      {2, 0.99, 0.995, false, 0}, {3, 0.97, 0.96, true, 1}, {4, 0.95, 0.85, true, 2}};
  CHECK(choose_regime_count(table) == 3);
  table[1].significant = false;
  CHECK(choose_regime_count(table) == 4);
  table[2].significant = false;
  try {
    choose_regime_count(table);
    FAIL("expected NumericalError");
  } catch (const NumericalError& e) {
    CHECK(std::string(e.what()).find("k = 3: index 0.9700") != std::string::npos);
  }
}

TEST_CASE("red-noise surrogate shape and seed") {
  std::vector<char> consecutive;
  const arma::mat pcs = planted_regime_pcs(240, consecutive);
  const arma::mat a = red_noise_surrogate(pcs, consecutive, 1);
  CHECK(arma::size(a) == arma::size(pcs));
  CHECK(arma::approx_equal(a, red_noise_surrogate(pcs, consecutive, 1), "absdiff", 0.0));
  CHECK_FALSE(arma::approx_equal(a, red_noise_surrogate(pcs, consecutive, 2), "absdiff", 1e-6));
  CHECK_THROWS_AS(red_noise_surrogate(pcs, std::vector<char>(10, 1), 1), InternalError);
}

TEST_CASE("partition similarity from unit centroids equals the per-pair anomaly correlation formula") {
  // The definition of Michelangeli et al. (1995), A(P, Q) = min_i max_j
  // ACC(P_i, Q_j), written out with Armadillo's norm_dot on random centroid
  // sets of several sizes; the library normalises each set once instead.
  arma::arma_rng::set_seed(31);
  std::vector<arma::mat> sets;
  for (int m = 0; m < 6; ++m) sets.push_back(arma::randn(7, 5));
  const arma::mat similarity = classifiability(sets).similarity;
  for (std::size_t m = 0; m < sets.size(); ++m)
    for (std::size_t q = 0; q < sets.size(); ++q) {
      double worst = 2.0;
      for (arma::uword i = 0; i < sets[m].n_cols; ++i) {
        double best = -2.0;
        for (arma::uword j = 0; j < sets[q].n_cols; ++j)
          best = std::max(best, arma::norm_dot(sets[m].col(i), sets[q].col(j)));
        worst = std::min(worst, best);
      }
      CHECK(partition_similarity(sets[m], sets[q]) == doctest::Approx(worst).epsilon(1e-13));
      if (m != q) CHECK(similarity(m, q) == doctest::Approx(worst).epsilon(1e-13));
    }
  CHECK(partition_similarity(arma::randn(7, 3), arma::randn(7, 8)) <= 1.0);
  arma::mat zero = sets[0];
  zero.col(2).zeros();
  CHECK_THROWS_AS(partition_similarity(zero, sets[1]), NumericalError);
  CHECK_THROWS_AS(classifiability({sets[0], zero}), NumericalError);
  CHECK_THROWS_AS(classifiability({sets[0], arma::randn(6, 5)}), InternalError);
}
