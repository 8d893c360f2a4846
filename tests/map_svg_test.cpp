// Regime maps: marching squares on planted fields with known isolines, line
// clipping, the coastline from Debian's 1-degree land-sea mask (libncarg-data)
// in both longitude frames of a domain across the dateline, and the SVG.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <map>

#include "isohypse/render/map_svg.hpp"

using namespace isohypse;

namespace {

arma::vec axis(double first, double step, int n) { return first + step * arma::regspace<arma::vec>(0, n - 1); }

}  // namespace

TEST_CASE("map_svg: marching squares finds the isoline of a linear field exactly") {
  const arma::vec x = axis(0, 1, 6), y = axis(0, 1, 4);
  arma::mat v(y.n_elem, x.n_elem);
  for (arma::uword i = 0; i < y.n_elem; ++i)
    for (arma::uword j = 0; j < x.n_elem; ++j) v(i, j) = x(j);  // f = x: the 2.3 isoline is the line x = 2.3
  const auto segs = contour_segments(v, x, y, 2.3);
  REQUIRE(segs.size() == 3);  // one per cell row
  for (const auto& s : segs) {
    CHECK(s.x0 == doctest::Approx(2.3));
    CHECK(s.x1 == doctest::Approx(2.3));
    CHECK(std::abs(s.y1 - s.y0) == doctest::Approx(1.0));
  }
}

TEST_CASE("map_svg: the isoline of a cone is a closed circle") {
  // f = distance from the origin; the isoline f = 3 is the circle of radius 3 (planted answer).
  const arma::vec x = axis(-5, 0.25, 41), y = axis(-5, 0.25, 41);
  arma::mat v(41, 41);
  for (int i = 0; i < 41; ++i)
    for (int j = 0; j < 41; ++j) v(i, j) = std::hypot(x(j), y(i));
  const auto segs = contour_segments(v, x, y, 3.0);
  double length = 0;
  std::map<std::pair<long, long>, int> ends;
  for (const auto& s : segs) {
    CHECK(std::hypot(s.x0, s.y0) == doctest::Approx(3.0).epsilon(0.01));
    length += std::hypot(s.x1 - s.x0, s.y1 - s.y0);
    ++ends[{std::lround(s.x0 * 1e6), std::lround(s.y0 * 1e6)}];
    ++ends[{std::lround(s.x1 * 1e6), std::lround(s.y1 * 1e6)}];
  }
  CHECK(length == doctest::Approx(2 * M_PI * 3).epsilon(0.01));
  for (const auto& [p, n] : ends) CHECK(n == 2);  // closed: every end meets exactly one other segment
}

TEST_CASE("map_svg: saddle cells are resolved by the cell mean, NaN cells skipped") {
  const arma::vec x = {0, 1}, y = {0, 1};
  // a = v(0,0) and c = v(1,1) high, b and d low; mean 0.55 >= 0.5: a and c are joined, b and d cut off.
  arma::mat v = {{1.0, 0.0}, {0.2, 1.0}};
  auto segs = contour_segments(v, x, y, 0.5);
  REQUIRE(segs.size() == 2);
  for (const auto& s : segs) {
    // Each segment cuts a corner of a low value: both its ends lie within 0.7 of (1,0) or of (0,1).
    const bool near_b = std::hypot(s.x0 - 1, s.y0) < 0.7 && std::hypot(s.x1 - 1, s.y1) < 0.7;
    const bool near_d = std::hypot(s.x0, s.y0 - 1) < 0.7 && std::hypot(s.x1, s.y1 - 1) < 0.7;
    CHECK((near_b || near_d));
  }
  v(0, 0) = NAN;
  CHECK(contour_segments(v, x, y, 0.5).empty());
}

TEST_CASE("map_svg: Liang-Barsky clipping") {
  auto c = clip_segment({-1, 0.5, 2, 0.5}, 0, 1, 0, 1);
  REQUIRE(c);
  CHECK(c->x0 == doctest::Approx(0));
  CHECK(c->x1 == doctest::Approx(1));
  CHECK(c->y0 == doctest::Approx(0.5));
  CHECK_FALSE(clip_segment({2, 2, 3, 3}, 0, 1, 0, 1));
  CHECK_FALSE(clip_segment({-1, 2, 2, 2}, 0, 1, 0, 1));
  auto inside = clip_segment({0.2, 0.2, 0.4, 0.9}, 0, 1, 0, 1);
  REQUIRE(inside);
  CHECK(inside->y1 == doctest::Approx(0.9));
}

TEST_CASE("map_svg: coastline over a domain across the dateline, in either longitude frame") {
  if (!std::filesystem::exists(kDefaultLandSeaMask)) {
    FAIL("missing " << kDefaultLandSeaMask << " (Debian package libncarg-data, installed by setup.sh)");
    return;
  }
  const LandMask mask = read_land_mask(kDefaultLandSeaMask);
  CHECK(mask.land.n_rows == 180);
  CHECK(mask.land.n_cols == 360);
  // Common knowledge: central Kansas (39N 98W) is land, the North Pacific at 40N 160W is sea.
  auto at = [&](double lat, double lon) {
    const arma::uword i = arma::index_min(arma::abs(mask.lat - lat));
    const arma::uword j = arma::index_min(arma::abs(mask.lon - std::fmod(lon + 360, 360)));
    return mask.land(i, j);
  };
  CHECK(at(38.5, -98.5) == 1);
  CHECK(at(40.5, -160.5) == 0);

  Grid east, west;  // 20..80N, 170E..40W as 170..320 and as -190..-40
  east.lat = axis(20, 2.5, 25);
  east.lon = axis(170, 2.5, 61);
  west.lat = east.lat;
  west.lon = east.lon - 360;
  const auto a = coastline(mask, east), b = coastline(mask, west);
  REQUIRE(a.size() > 100);  // North America's coasts
  REQUIRE(a.size() == b.size());
  for (std::size_t i = 0; i < a.size(); ++i) {
    CHECK(a[i].x0 == doctest::Approx(b[i].x0 + 360));
    CHECK(a[i].y0 == doctest::Approx(b[i].y0));
    CHECK(a[i].x0 >= 170 - 1e-9);
    CHECK(a[i].x1 <= 320 + 1e-9);
    CHECK(a[i].y0 >= 20 - 1e-9);
    CHECK(a[i].y1 <= 80 + 1e-9);
  }
}

TEST_CASE("map_svg: the SVG is self-contained, escaped and coloured by sign") {
  Grid g;
  g.lat = axis(20, 5, 5);
  g.lon = axis(170, 5, 9);
  arma::vec p(g.n_points());
  for (arma::uword i = 0; i < g.n_lat(); ++i)
    for (arma::uword j = 0; j < g.n_lon(); ++j) p(i * g.n_lon() + j) = (j < 4 ? -1.0 : 1.0) * 100.0 * (i + 1) / 5;
  const std::string s = regime_map_svg(p, g, {}, "R1 <ridge> & trough");
  CHECK(s.find("<svg xmlns=\"http://www.w3.org/2000/svg\"") == 0);
  CHECK(s.find("R1 &lt;ridge&gt; &amp; trough") != std::string::npos);
  CHECK(s.find("<ridge>") == std::string::npos);
  CHECK(s.find("href") == std::string::npos);  // nothing external
  CHECK(s.find("#b2182b") != std::string::npos);  // the darkest red band (the maximum, +100 m)
  CHECK(s.find("#2166ac") != std::string::npos);  // the darkest blue band (the minimum, -100 m)
  CHECK(s.find("170E") != std::string::npos);
  CHECK_THROWS(regime_map_svg(arma::vec(3), g, {}, "x"));
}
