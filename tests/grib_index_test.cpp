// Unit checks of the GRIB index's pure parts; the files themselves are
// checked against python3-eccodes in tests/python/test_grib_index.py.
#include <doctest/doctest.h>

#include <cmath>

#include "isohypse/base/error.hpp"
#include "isohypse/io/grib_index.hpp"

using namespace isohypse;

TEST_CASE("grib step units to hours (WMO FM 92 Code table 4.4)") {
  CHECK(step_to_hours(2880, 0, "f") == doctest::Approx(48.0));  // minutes
  CHECK(step_to_hours(36, 1, "f") == 36.0);                      // hours
  CHECK(step_to_hours(3, 2, "f") == 72.0);                       // days
  CHECK(step_to_hours(4, 11, "f") == 24.0);                      // 6 hours
  CHECK(step_to_hours(7200, 13, "f") == doctest::Approx(2.0));   // seconds
  CHECK_THROWS_AS(step_to_hours(1, 3, "f"), DataError);          // months
  CHECK_THROWS_WITH_AS(step_to_hours(1, 4, "x.grib"), doctest::Contains("x.grib"), DataError);
}

TEST_CASE("grib heights: geopotential over g0, geopotential height as is") {
  CHECK(*height_to_metres(129, "z") == doctest::Approx(1.0 / 9.80665));
  CHECK(*height_to_metres(156, "gh") == 1.0);
  CHECK_FALSE(height_to_metres(130, "t").has_value());
}

TEST_CASE("grib grids compare longitudes modulo 360") {
  GribGrid a{"regular_ll", 3, 1, {50.0}, {330.0, 335.0, 340.0}};
  GribGrid b = a;
  b.longitudes = {-30.0, -25.0, -20.0};
  CHECK(a.same_as(b));
  b.longitudes = {-30.0, -25.0, -19.0};
  CHECK_FALSE(a.same_as(b));
}

TEST_CASE("grib scan of a missing file is an input error naming it") {
  CHECK_THROWS_WITH_AS(scan_grib_heights({"/nonexistent/a.grib"}), doctest::Contains("/nonexistent/a.grib"),
                       InputError);
}
