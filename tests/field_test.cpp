// The grid step every reader and inspect share (field.hpp: axis_step).
#include <doctest/doctest.h>

#include "isohypse/base/field.hpp"

using namespace isohypse;

TEST_CASE("axis_step: a regular ascending axis gives its step") {
  CHECK(axis_step(arma::regspace<arma::vec>(20.0, 2.5, 80.0)) == doctest::Approx(2.5).epsilon(1e-15));
  CHECK(axis_step(arma::vec{0.0, 0.75, 1.5, 2.25}) == 0.75);
}

TEST_CASE("axis_step: a descending axis gives the same positive step") {
  CHECK(axis_step(arma::vec{90.0, 87.5, 85.0, 82.5}) == 2.5);
  CHECK(axis_step(arma::regspace<arma::vec>(80.0, -10.0, 20.0)) == 10.0);
}

TEST_CASE("axis_step: the mean absolute step of an irregular axis") {
  CHECK(axis_step(arma::vec{0.0, 1.0, 3.0, 6.0}) == 2.0);
}

TEST_CASE("axis_step: a single value or an empty axis has step 0") {
  CHECK(axis_step(arma::vec{45.0}) == 0.0);
  CHECK(axis_step(arma::vec()) == 0.0);
}
