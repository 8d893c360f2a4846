#include <doctest/doctest.h>

#include <algorithm>
#include <string>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/kmeans.hpp"

using namespace isohypse;

namespace {

// Planted groups of points around the given centres (dims x groups), with
// the given sizes; returns the points and the planted group of each.
std::pair<arma::mat, std::vector<int>> planted(const arma::mat& centres,
                                               const std::vector<int>& sizes, double spread,
                                               int seed) {
  arma::arma_rng::set_seed(seed);
  std::vector<int> group;
  arma::mat points(centres.n_rows, 0);
  for (std::size_t g = 0; g < sizes.size(); ++g) {
    arma::mat p = spread * arma::randn(centres.n_rows, sizes[g]);
    p.each_col() += centres.col(g);
    points = arma::join_rows(points, p);
    group.insert(group.end(), sizes[g], static_cast<int>(g));
  }
  return {points, group};
}

// A textbook Lloyd loop (Lloyd 1982), written independently of the library:
// assign to the nearest centre, move each centre to its mean, until no label
// changes. Used as the plain reference from a given start.
std::pair<std::vector<int>, arma::mat> reference_lloyd(const arma::mat& X, arma::mat C) {
  std::vector<int> labels(X.n_cols, -1);
  for (int it = 0; it < 1000; ++it) {
    std::vector<int> next(X.n_cols);
    for (arma::uword i = 0; i < X.n_cols; ++i) {
      arma::rowvec d = arma::sum(arma::square(C.each_col() - X.col(i)), 0);
      next[i] = static_cast<int>(d.index_min());
    }
    if (next == labels) break;
    labels = next;
    for (arma::uword j = 0; j < C.n_cols; ++j) {
      arma::uvec members = arma::find(arma::conv_to<arma::ivec>::from(labels) == static_cast<int>(j));
      if (!members.empty()) C.col(j) = arma::mean(X.cols(members), 1);
    }
  }
  return {labels, C};
}

}  // namespace

TEST_CASE("k-means on the scikit-learn docstring example") {
  // scikit-learn KMeans docstring (scikit-learn 1.2): points (1,2),(1,4),(1,0),
  // (10,2),(10,4),(10,0), k = 2 -> centres (1,2) and (10,2), inertia 16.
  const arma::mat X = {{1, 1, 1, 10, 10, 10}, {2, 4, 0, 2, 4, 0}};
  KMeansOptions o;
  o.k = 2;
  o.restarts = 10;
  const KMeansResult r = kmeans(X, o);
  CHECK(r.inertia == doctest::Approx(16.0));
  // Equal sizes: the cluster holding point 0 comes first.
  CHECK(arma::approx_equal(r.centroids, arma::mat{{1, 10}, {2, 2}}, "absdiff", 1e-12));
  CHECK(r.labels == std::vector<int>{0, 0, 0, 1, 1, 1});
}

// Hubert & Arabie (1985), "Comparing partitions", J. Classification 2, 193-218.
TEST_CASE("adjusted Rand index check values of METHODS.md section 3") {
  CHECK(adjusted_rand_index({0, 0, 0, 1, 1, 1}, {0, 0, 1, 1, 2, 2}) == doctest::Approx(8.0 / 33.0));
  CHECK(adjusted_rand_index({0, 0, 1, 2}, {0, 0, 1, 1}) == doctest::Approx(4.0 / 7.0));
  CHECK(adjusted_rand_index({0, 0, 1, 1, 2}, {5, 5, -1, -1, 7}) == doctest::Approx(1.0));
  CHECK(adjusted_rand_index({1, 1, 1}, {4, 4, 4}) == 1.0);
  CHECK_THROWS_AS(adjusted_rand_index({0, 1}, {0}), InternalError);
}

TEST_CASE("k-means recovers planted groups and numbers them largest first") {
  const arma::mat centres = {{0, 6, 0, 6}, {0, 0, 6, 6}, {0, 0, 0, 3}};
  auto [X, group] = planted(centres, {30, 80, 50, 20}, 0.7, 3);
  KMeansOptions o;
  o.k = 4;
  o.restarts = 20;
  const KMeansResult r = kmeans(X, o);
  CHECK(adjusted_rand_index(r.labels, group) == doctest::Approx(1.0));
  // Sizes 80, 50, 30, 20: cluster 0 is planted group 1, cluster 3 group 3.
  CHECK(r.labels[30] == 0);
  CHECK(r.labels[110] == 1);
  CHECK(r.labels[0] == 2);
  CHECK(r.labels[160] == 3);
  CHECK(arma::norm(r.centroids.col(0) - centres.col(1)) < 0.3);
}

TEST_CASE("k-means gives the same result on 1 and 2 threads") {
  // Unimodal data: restarts end in different local minima, so the choice of
  // the best one must not depend on which thread ran it.
  arma::arma_rng::set_seed(11);
  const arma::mat X = arma::diagmat(arma::vec{3, 2, 1.5, 1}) * arma::randn(4, 400);
  KMeansOptions o;
  o.k = 5;
  o.restarts = 16;
  o.threads = 1;
  const KMeansResult one = kmeans(X, o);
  o.threads = 2;
  const KMeansResult two = kmeans(X, o);
  CHECK(one.labels == two.labels);
  CHECK(one.inertia == two.inertia);
  CHECK(one.best_restart == two.best_restart);
  CHECK(arma::approx_equal(one.centroids, two.centroids, "absdiff", 0.0));
  o.seed += 1;
  CHECK(kmeans(X, o).inertia >= 0.0);  // another seed runs too
}

TEST_CASE("kmeans_from matches a textbook Lloyd loop and the Hamerly step follows the same path") {
  arma::arma_rng::set_seed(5);
  const arma::mat X = arma::diagmat(arma::vec{2, 1.5, 1}) * arma::randn(3, 500);
  for (int start = 0; start < 5; ++start) {
    const arma::mat C0 = X.cols(arma::uvec{arma::uword(start), arma::uword(start + 100),
                                           arma::uword(start + 200), arma::uword(start + 300)});
    const auto [ref_labels, ref_centres] = reference_lloyd(X, C0);
    const KMeansResult plain = kmeans_from(X, C0, 1000, 0.0, LloydStep::Plain);
    const KMeansResult fast = kmeans_from(X, C0, 1000, 0.0, LloydStep::Hamerly);
    CHECK(plain.labels == ref_labels);
    CHECK(arma::approx_equal(plain.centroids, ref_centres, "absdiff", 1e-12));
    CHECK(fast.labels == plain.labels);
    CHECK(fast.iterations == plain.iterations);
    CHECK(fast.inertia == doctest::Approx(plain.inertia).epsilon(1e-12));
    double inertia = 0.0;
    for (arma::uword i = 0; i < X.n_cols; ++i)
      inertia += arma::accu(arma::square(X.col(i) - plain.centroids.col(plain.labels[i])));
    CHECK(plain.inertia == doctest::Approx(inertia).epsilon(1e-12));
    CHECK(nearest_centroid(X, plain.centroids) == plain.labels);
  }
}

TEST_CASE("an empty cluster is re-seeded at the farthest point") {
  // Planted groups at x = 0, 10, 20; the third initial centre is far from
  // everything, so it starts empty and must take a point of the group at 20.
  const arma::mat centres = {{0, 10, 20}, {0, 0, 0}};
  auto [X, group] = planted(centres, {20, 20, 20}, 0.3, 9);
  const arma::mat C0 = {{0, 10, 1000}, {0, 0, 1000}};
  for (auto step : {LloydStep::Plain, LloydStep::Hamerly}) {
    const KMeansResult r = kmeans_from(X, C0, 100, 0.0, step);
    CHECK(adjusted_rand_index(r.labels, group) == doctest::Approx(1.0));
    CHECK(arma::norm(r.centroids.col(2) - centres.col(2)) < 0.5);
  }
}

TEST_CASE("k-means refuses sizes that do not fit and names them") {
  const arma::mat X(3, 5, arma::fill::randn);
  KMeansOptions o;
  o.k = 9;
  try {
    kmeans(X, o);
    FAIL("expected InputError");
  } catch (const InputError& e) {
    CHECK(std::string(e.what()).find("k = 9 regimes but only 5 days") != std::string::npos);
  }
  CHECK_THROWS_AS(kmeans_from(X, arma::mat(2, 2, arma::fill::zeros), 10, 0.0), InternalError);
  CHECK_THROWS_AS(nearest_centroid(X, arma::mat(2, 2, arma::fill::zeros)), InternalError);
  arma::mat bad = X;
  bad(0, 0) = arma::datum::nan;
  o.k = 2;
  CHECK_THROWS_AS(kmeans(bad, o), DataError);
}

namespace {

// kmeans() with one restart and plain Lloyd steps (the double path) from the
// same k-means++ start as kmeans_quick with the same seed.
KMeansResult double_run(const arma::mat& X, int k, std::uint64_t seed) {
  KMeansOptions o;
  o.k = k;
  o.restarts = 1;
  o.seed = seed;
  o.tolerance = 0.0;
  o.step = LloydStep::Plain;
  return kmeans(X, o);
}

}  // namespace

TEST_CASE("quick k-means (float and early stop) gives the double Lloyd labels on planted groups") {
  // Four well-separated groups in 5 dimensions (spread 0.7, centres >= 6
  // apart): from the same start both paths must end in the same partition,
  // and the float inertia must agree within 1e-5 relative (float sums of
  // squares over a few hundred points; our tolerance, not a published one).
  const arma::mat centres = {{0, 6, 0, 6}, {0, 0, 6, 6}, {0, 0, 0, 3}, {1, 0, 0, 0}, {0, 2, 0, 0}};
  auto [X, group] = planted(centres, {30, 80, 50, 20}, 0.7, 3);
  const arma::fmat rows = arma::conv_to<arma::fmat>::from(X.t());
  QuickKMeans state;
  for (std::uint64_t seed = 1; seed <= 10; ++seed) {
    QuickKMeansOptions q;
    q.k = 4;
    q.seed = seed;
    kmeans_quick(rows, q, state);
    const KMeansResult ref = double_run(X, 4, seed);
    CHECK(adjusted_rand_index(state.labels, ref.labels) == 1.0);
    CHECK(state.inertia == doctest::Approx(ref.inertia).epsilon(1e-5));
    CHECK(state.centroids.n_rows == 5);
    CHECK(state.centroids.n_cols == 4);
  }
}

TEST_CASE("quick k-means stays within convergence noise of the double Lloyd on unimodal data") {
  // No groups (as red noise): Lloyd creeps, so the early stop (relative
  // inertia change 1e-6) ends before the double path's full convergence.
  // The inertia may then exceed the converged one by a little (< 0.5 %), and
  // each quick centroid has a double centroid with anomaly correlation > 0.99;
  // with no stop (0) the quick path follows the double one to the same labels
  // but for float rounding at boundaries (adjusted Rand index > 0.98).
  // Tolerances are ours (convergence noise), checked on 8 seeds.
  arma::arma_rng::set_seed(11);
  const arma::mat X = arma::diagmat(arma::vec{3, 2, 1.5, 1, 0.8, 0.5}) * arma::randn(6, 2000);
  const arma::fmat rows = arma::conv_to<arma::fmat>::from(X.t());
  QuickKMeans state;
  for (std::uint64_t seed = 1; seed <= 8; ++seed) {
    const KMeansResult ref = double_run(X, 6, seed);
    QuickKMeansOptions q;
    q.k = 6;
    q.seed = seed;
    q.relative_inertia_change = 0.0;
    kmeans_quick(rows, q, state);
    CHECK(adjusted_rand_index(state.labels, ref.labels) > 0.98);
    q.relative_inertia_change = 1e-6;
    kmeans_quick(rows, q, state);
    CHECK(state.inertia >= ref.inertia * (1.0 - 1e-6));
    CHECK(state.inertia <= ref.inertia * 1.005);
    for (arma::uword i = 0; i < 6; ++i) {
      double best = -1.0;
      for (arma::uword j = 0; j < 6; ++j)
        best = std::max(best, arma::norm_dot(state.centroids.col(i), ref.centroids.col(j)));
      CHECK(best > 0.99);
    }
  }
}

TEST_CASE("quick k-means restarts keep the smallest inertia and refuse bad input") {
  arma::arma_rng::set_seed(12);
  const arma::fmat rows = arma::randn<arma::fmat>(300, 3);
  QuickKMeans state;
  QuickKMeansOptions q;
  q.k = 5;
  q.seed = 4;
  q.restarts = 6;
  kmeans_quick(rows, q, state);
  const double best = state.inertia;
  const std::vector<int> labels = state.labels;
  double recomputed = 0.0;
  for (arma::uword i = 0; i < rows.n_rows; ++i)
    recomputed += arma::accu(arma::square(arma::conv_to<arma::vec>::from(rows.row(i).t()) -
                                          state.centroids.col(static_cast<arma::uword>(labels[i]))));
  CHECK(best == doctest::Approx(recomputed).epsilon(1e-5));
  q.restarts = 1;
  kmeans_quick(rows, q, state);
  CHECK(best <= state.inertia);
  q.k = 301;
  CHECK_THROWS_AS(kmeans_quick(rows, q, state), InputError);
  arma::fmat bad = rows;
  bad(3, 1) = arma::datum::nan;
  q.k = 2;
  CHECK_THROWS_AS(kmeans_quick(bad, q, state), DataError);
}
