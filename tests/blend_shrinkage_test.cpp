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
