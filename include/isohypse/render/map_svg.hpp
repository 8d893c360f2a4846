// Regime maps as SVG: the anomaly pattern of a regime (metres) as coloured
// cells over its domain, with contour lines, coastlines and a graticule.
//
// Coordinates: x is longitude in the regime grid's contiguous frame (a domain
// across the dateline runs e.g. 170 .. 320; any other frame is mapped to it
// modulo 360), y is latitude. The map is plate carree with x shrunk by the
// cosine of the mid-latitude, so shapes look right near the domain's centre.
#pragma once

#include <armadillo>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/base/field.hpp"
#include "isohypse/io/land_mask.hpp"

namespace isohypse {

struct Segment {
  double x0, y0, x1, y1;
};

// Marching squares (the 2-D case of Lorensen and Cline 1987, Computer
// Graphics 21(4), 163-169): the segments of the `level` isoline of values
// (n_y x n_x, values(i, j) at (x(j), y(i)), x and y increasing), with
// linear interpolation along cell edges. Saddle cells are resolved by the
// cell's mean. Cells with a NaN corner are skipped.
std::vector<Segment> contour_segments(const arma::mat& values, const arma::vec& x, const arma::vec& y, double level);

// The part of `s` inside the box (Liang and Barsky 1984, ACM Trans. Graphics
// 3(1), 1-22), or nothing.
std::optional<Segment> clip_segment(const Segment& s, double x_min, double x_max, double y_min, double y_max);

// The coastline (the 0.5 isoline of the mask) over the grid's extent, in
// the grid's longitude frame, clipped to it.
std::vector<Segment> coastline(const LandMask& mask, const Grid& grid);

// A self-contained SVG document (no external references) of one pattern
// (n_points, metres, p = i_lat * n_lon + i_lon). Colours: red for positive
// (ridges), blue for negative (troughs), in bands of `step_m` up to
// +-scale_m (pass the same scale for every regime so that maps compare);
// scale_m <= 0 takes the pattern's largest absolute value. `title` is
// escaped. A non-empty `regime_colour` ("#rrggbb", base/vocabulary.hpp)
// draws the regime's swatch (class "regime-swatch") before the title.
std::string regime_map_svg(const arma::vec& pattern_m, const Grid& grid, const std::vector<Segment>& coast,
                           const std::string& title, double scale_m = 0, const std::string& regime_colour = "");

}  // namespace isohypse
