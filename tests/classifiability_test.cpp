#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <string>
#include <thread>

#include "isohypse/numerics/classifiability.hpp"
#include "isohypse/base/error.hpp"
#include "planted_pcs.hpp"

using namespace isohypse;
using isohypse::testing::planted_regime_pcs;

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
  // The jackknife spread: the index with each partition left out (the mean
  // of the remaining ordered pairs), sqrt((N-1)/N sum (I_(i) - mean)^2)
  // (Efron & Tibshirani 1993, An Introduction to the Bootstrap, eq. 11.5).
  std::vector<double> left_out;
  for (std::size_t i = 0; i < sets.size(); ++i) {
    std::vector<arma::mat> rest;
    for (std::size_t q = 0; q < sets.size(); ++q)
      if (q != i) rest.push_back(sets[q]);
    left_out.push_back(classifiability(rest).index);
  }
  double mean = 0, ss = 0;
  for (double v : left_out) mean += v / 4.0;
  for (double v : left_out) ss += (v - mean) * (v - mean);
  CHECK(r.spread == doctest::Approx(std::sqrt(3.0 / 4.0 * ss)).epsilon(1e-12));
  CHECK(r.spread > 0.0);
  CHECK(classifiability({sets[0], sets[0], sets[0]}).spread == 0.0);
  // A(P1, P2) = min(max(1, 0.6), max(0, 0.8)) = 0.8 by the definition.
  CHECK(partition_similarity(sets[0], sets[1]) == doctest::Approx(0.8));
  CHECK(anomaly_correlation({1, 0}, {0.6, 0.8}) == doctest::Approx(0.6));
  CHECK_THROWS_AS(anomaly_correlation({0, 0}, {1, 0}), NumericalError);
  CHECK_THROWS_AS(classifiability({sets[0]}), InternalError);
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
