// The blend coefficient's jackknife shrinkage (numerics/calibration.hpp),
// against a hand computation: groups (numerator, denominator) = (1, 1),
// (2, 2), (0, 2): a = 3/5 = 0.6; leaving one group out gives 2/4, 1/3 and
// 3/3, whose mean is 0.611111; SE^2 = (2/3) * 0.240741 = 0.160494, SE =
// 0.400617 (the jackknife variance of Efron 1982, The Jackknife, the
// Bootstrap and Other Resampling Plans, ch. 3; from memory).
#include <doctest/doctest.h>

#include <cmath>

#include "isohypse/numerics/calibration.hpp"

using namespace isohypse;

namespace {
std::vector<BlendSums> groups() { return {{1, 1, 10}, {2, 2, 10}, {0, 2, 10}}; }
}  // namespace

TEST_CASE("blend shrinkage: the jackknife standard error over groups by hand") {
  const ShrunkBlend none = shrunk_blend_coefficient(groups(), 0.0);
  CHECK(none.fitted == doctest::Approx(0.6).epsilon(1e-12));
  CHECK(none.standard_error == doctest::Approx(0.400617).epsilon(1e-6));
  CHECK(none.coefficient == doctest::Approx(0.6).epsilon(1e-12));
  // z = 0.5: 0.6 * (1 - (0.5 * 0.400617 / 0.6)^2) = 0.533128
  CHECK(shrunk_blend_coefficient(groups(), 0.5).coefficient == doctest::Approx(0.533128).epsilon(1e-6));
  // z = 2: the fit lies within two standard errors of 0, so climatology
  CHECK(shrunk_blend_coefficient(groups(), 2.0).coefficient == 0.0);
}

TEST_CASE("blend shrinkage: empty groups do not count and one group has no error") {
  std::vector<BlendSums> g = groups();
  g.push_back({0, 0, 0});
  CHECK(shrunk_blend_coefficient(g, 0.5).coefficient == doctest::Approx(0.533128).epsilon(1e-6));
  const ShrunkBlend one = shrunk_blend_coefficient({{3, 2, 5}}, 2.0);
  CHECK(std::isnan(one.standard_error));
  CHECK(one.fitted == doctest::Approx(1.5));
  CHECK(one.coefficient == 1.0);  // clipped
  CHECK(std::isnan(shrunk_blend_coefficient({{0, 0, 4}}, 2.0).coefficient));
}

// A planted answer for the ensemble-size rescaling: cases with a known
// probability pi (three states), the outcome drawn from pi, and two
// ensembles of independent members drawn from pi, of 8 and of 32 members.
// The closed form fitted on the 8-member probabilities and rescaled to 32
// members must match the closed form fitted directly on the 32-member ones
// (both estimate the same expectation; 40,000 cases leave about 0.01 of
// sampling error), while the unrescaled 8-member fit is clearly smaller.
TEST_CASE("blend for another ensemble size: 8 members rescaled to 32 match a direct fit on 32") {
  arma::arma_rng::set_seed(20261202);
  const arma::uword n = 40000, S = 3;
  arma::mat p8(n, S, arma::fill::zeros), p32(n, S, arma::fill::zeros), c(n, S);
  std::vector<int> o(n);
  arma::vec m8(n), m32(n);
  c.each_row() = arma::rowvec{0.4, 0.35, 0.25};
  auto draw = [](const arma::rowvec& pi) {
    const double u = arma::randu();
    return u < pi(0) ? 0 : u < pi(0) + pi(1) ? 1 : 2;
  };
  for (arma::uword i = 0; i < n; ++i) {
    // pi: the climatology moved part of the way towards a random state (a forecast with some signal)
    arma::rowvec pi = c.row(i);
    const double w = 0.6 * arma::randu();
    pi *= 1.0 - w;
    pi(static_cast<arma::uword>(draw(c.row(i)))) += w;
    o[i] = draw(pi);
    for (int k = 0; k < 8; ++k) p8(i, static_cast<arma::uword>(draw(pi))) += 1.0 / 8;
    for (int k = 0; k < 32; ++k) p32(i, static_cast<arma::uword>(draw(pi))) += 1.0 / 32;
    m8(i) = 8;
    m32(i) = 32;
  }
  const BlendSums s8 = blend_sums(p8, c, o, m8), s32 = blend_sums(p32, c, o, m32);
  const double a8 = s8.numerator / s8.denominator, a32 = s32.numerator / s32.denominator;
  const BlendSums r = for_ensemble(s8, 32);
  const double rescaled = r.numerator / r.denominator;
  CAPTURE(a8);
  CAPTURE(a32);
  CAPTURE(rescaled);
  CHECK(std::abs(rescaled - a32) < 0.03);
  CHECK(a32 - a8 > 0.1);
  const BlendSums same = for_ensemble(s8, 8);  // the fitting size changes nothing
  CHECK(same.denominator == doctest::Approx(s8.denominator).epsilon(1e-12));
}
