#include "isohypse/render/map_svg.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <sstream>

#include "isohypse/base/error.hpp"
#include "isohypse/base/vocabulary.hpp"

namespace isohypse {

std::vector<Segment> contour_segments(const arma::mat& v, const arma::vec& x, const arma::vec& y, double level) {
  std::vector<Segment> out;
  if (v.n_rows < 2 || v.n_cols < 2) return out;
  for (arma::uword i = 0; i + 1 < v.n_rows; ++i)
    for (arma::uword j = 0; j + 1 < v.n_cols; ++j) {
      // Corners counter-clockwise from the lower left: a (i,j), b (i,j+1), c (i+1,j+1), d (i+1,j).
      const double a = v(i, j), b = v(i, j + 1), c = v(i + 1, j + 1), d = v(i + 1, j);
      if (std::isnan(a) || std::isnan(b) || std::isnan(c) || std::isnan(d)) continue;
      const int cs = (a >= level) | (b >= level) << 1 | (c >= level) << 2 | (d >= level) << 3;
      if (cs == 0 || cs == 15) continue;
      auto lerp = [&](double p, double q) { return p == q ? 0.5 : (level - p) / (q - p); };
      // Crossing points on the edges: 0 bottom a-b, 1 right b-c, 2 top d-c, 3 left a-d.
      auto edge = [&](int e, double& px, double& py) {
        switch (e) {
          case 0: px = x(j) + lerp(a, b) * (x(j + 1) - x(j)); py = y(i); break;
          case 1: px = x(j + 1); py = y(i) + lerp(b, c) * (y(i + 1) - y(i)); break;
          case 2: px = x(j) + lerp(d, c) * (x(j + 1) - x(j)); py = y(i + 1); break;
          default: px = x(j); py = y(i) + lerp(a, d) * (y(i + 1) - y(i)); break;
        }
      };
      auto add = [&](int e0, int e1) {
        Segment s{};
        edge(e0, s.x0, s.y0);
        edge(e1, s.x1, s.y1);
        out.push_back(s);
      };
      const bool centre_above = (a + b + c + d) / 4 >= level;
      switch (cs) {
        case 1: case 14: add(3, 0); break;
        case 2: case 13: add(0, 1); break;
        case 3: case 12: add(3, 1); break;
        case 4: case 11: add(1, 2); break;
        case 6: case 9: add(0, 2); break;
        case 7: case 8: add(3, 2); break;
        case 5:  // a and c above
          if (centre_above) { add(0, 1); add(2, 3); } else { add(3, 0); add(1, 2); }
          break;
        case 10:  // b and d above
          if (centre_above) { add(3, 0); add(1, 2); } else { add(0, 1); add(2, 3); }
          break;
      }
    }
  return out;
}

std::optional<Segment> clip_segment(const Segment& s, double x_min, double x_max, double y_min, double y_max) {
  const double dx = s.x1 - s.x0, dy = s.y1 - s.y0;
  double t0 = 0, t1 = 1;
  const double p[4] = {-dx, dx, -dy, dy};
  const double q[4] = {s.x0 - x_min, x_max - s.x0, s.y0 - y_min, y_max - s.y0};
  for (int k = 0; k < 4; ++k) {
    if (p[k] == 0) {
      if (q[k] < 0) return std::nullopt;  // parallel to this edge and outside it
      continue;
    }
    const double t = q[k] / p[k];
    if (p[k] < 0) t0 = std::max(t0, t);
    else t1 = std::min(t1, t);
    if (t0 > t1) return std::nullopt;
  }
  return Segment{s.x0 + t0 * dx, s.y0 + t0 * dy, s.x0 + t1 * dx, s.y0 + t1 * dy};
}

std::vector<Segment> coastline(const LandMask& mask, const Grid& grid) {
  std::vector<Segment> out;
  if (mask.empty() || grid.n_lat() == 0 || grid.n_lon() == 0) return out;
  const double x_min = grid.lon.front(), x_max = grid.lon.back();
  const double y_min = grid.lat.front(), y_max = grid.lat.back();
  const double step = (mask.lon.back() - mask.lon.front()) / (mask.lon.n_elem - 1);
  const int n_lon = static_cast<int>(mask.lon.n_elem);
  // Mask columns re-indexed in the grid's frame, one step beyond the box each side so that lines reach its edges.
  const double first = mask.lon(0) + std::floor((x_min - step - mask.lon(0)) / step) * step;
  const int nx = static_cast<int>(std::ceil((x_max + step - first) / step)) + 1;
  arma::uvec rows = arma::find(mask.lat >= y_min - 2 * step && mask.lat <= y_max + 2 * step);
  if (rows.n_elem < 2 || nx < 2) return out;
  arma::vec xs(nx), ys = mask.lat(rows);
  arma::mat sub(rows.n_elem, nx);
  for (int j = 0; j < nx; ++j) {
    xs(j) = first + j * step;
    const long col = std::lround((xs(j) - mask.lon(0)) / step);
    const arma::uword c = static_cast<arma::uword>(((col % n_lon) + n_lon) % n_lon);  // longitudes modulo 360
    for (arma::uword i = 0; i < rows.n_elem; ++i) sub(i, j) = mask.land(rows(i), c);
  }
  for (const Segment& s : contour_segments(sub, xs, ys, 0.5))
    if (auto c = clip_segment(s, x_min, x_max, y_min, y_max)) out.push_back(*c);
  return out;
}

namespace {

std::string num(double v) {
  char b[32];
  std::snprintf(b, sizeof b, "%.1f", v);
  return b;
}

std::string lon_label(double lon) {
  double l = std::fmod(lon, 360.0);
  if (l > 180) l -= 360;
  if (l <= -180) l += 360;
  const long r = std::lround(std::abs(l));
  if (r == 0 || r == 180) return std::to_string(r);
  return std::to_string(r) + (l > 0 ? "E" : "W");
}

std::string lat_label(double lat) {
  const long r = std::lround(std::abs(lat));
  return r == 0 ? "0" : std::to_string(r) + (lat > 0 ? "N" : "S");
}

// A round band width giving about four bands on each side of zero.
double band_step(double scale) {
  const double raw = scale / 4;
  const double mag = std::pow(10.0, std::floor(std::log10(raw)));
  for (double f : {1.0, 2.0, 2.5, 5.0, 10.0})
    if (f * mag >= raw) return f * mag;
  return 10 * mag;
}

// Band b (0 = [0, step)) of a sign: light to dark red (ridge) or blue (trough); white for the band around zero.
std::string band_colour(int band, int n_bands) {
  if (band == 0) return "#ffffff";
  const int s = band > 0 ? 1 : -1;
  const double t = std::min(1.0, static_cast<double>(std::abs(band)) / n_bands);
  // From a pale tint to a saturated colour (ColorBrewer-like RdBu ends, common practice).
  const double r0 = s > 0 ? 253 : 209, g0 = s > 0 ? 219 : 229, b0 = s > 0 ? 199 : 240;
  const double r1 = s > 0 ? 178 : 33, g1 = s > 0 ? 24 : 102, b1 = s > 0 ? 43 : 172;
  char buf[8];
  std::snprintf(buf, sizeof buf, "#%02x%02x%02x", static_cast<int>(r0 + t * (r1 - r0)),
                static_cast<int>(g0 + t * (g1 - g0)), static_cast<int>(b0 + t * (b1 - b0)));
  return buf;
}

}  // namespace

namespace {

// The plot area: plate carree with x shrunk by the cosine of the mid-latitude.
struct MapFrame {
  double x0, x1, y0, y1;  // longitude and latitude extent
  double left = 40, top = 30, right = 80, bottom = 26;
  double plot_w = 600, plot_h = 0, sx = 0, sy = 0;

  explicit MapFrame(const Grid& grid)
      : x0(grid.lon.front()), x1(grid.lon.back()), y0(grid.lat.front()), y1(grid.lat.back()) {
    const double coslat = std::cos((y0 + y1) / 2 * M_PI / 180);
    sx = plot_w / (x1 - x0);
    sy = sx / std::max(coslat, 0.2);
    plot_h = (y1 - y0) * sy;
  }
  double X(double lon) const { return left + (lon - x0) * sx; }
  double Y(double lat) const { return top + (y1 - lat) * sy; }
  double width() const { return left + plot_w + right; }
  double height() const { return top + plot_h + bottom; }
};

// Colour bands of equal width on each side of zero; (-step, step) is band 0.
struct Bands {
  double step;
  int n;
  explicit Bands(double scale) : step(band_step(scale)), n(static_cast<int>(std::ceil(scale / step - 1e-9))) {}
  int of(double v) const {
    const int b = static_cast<int>(std::floor(std::abs(v) / step));
    return (v < 0 ? -1 : 1) * std::min(b, n);
  }
};

// Cell k's lower or upper edge along an axis: half-way to the neighbour.
double cell_edge(const arma::vec& v, arma::uword k, bool upper) {
  if (upper) return k + 1 < v.n_elem ? (v(k) + v(k + 1)) / 2 : v(k);
  return k > 0 ? (v(k - 1) + v(k)) / 2 : v(k);
}

// Cells centred on grid points; runs of one band along a row are merged into one rectangle.
void draw_cells(std::ostringstream& o, const arma::vec& pattern, const Grid& grid, const MapFrame& f,
                const Bands& bands) {
  const arma::uword nla = grid.n_lat(), nlo = grid.n_lon();
  o << "<defs><clipPath id=\"plot\"><rect x=\"" << num(f.left) << "\" y=\"" << num(f.top) << "\" width=\""
    << num(f.plot_w) << "\" height=\"" << num(f.plot_h)
    << "\"/></clipPath></defs>\n<g clip-path=\"url(#plot)\" shape-rendering=\"crispEdges\">\n";
  for (arma::uword i = 0; i < nla; ++i) {
    const double ya = f.Y(cell_edge(grid.lat, i, true)), yb = f.Y(cell_edge(grid.lat, i, false));
    for (arma::uword j = 0; j < nlo;) {
      const double v = pattern(i * nlo + j);
      arma::uword end = j + 1;
      const int b = std::isnan(v) ? 0 : bands.of(v);
      while (end < nlo && !std::isnan(pattern(i * nlo + end)) && bands.of(pattern(i * nlo + end)) == b) ++end;
      if (std::isnan(v)) {
        end = j + 1;
        o << "<rect x=\"" << num(f.X(cell_edge(grid.lon, j, false))) << "\" y=\"" << num(ya) << "\" width=\""
          << num(f.X(cell_edge(grid.lon, j, true)) - f.X(cell_edge(grid.lon, j, false))) << "\" height=\""
          << num(yb - ya) << "\" fill=\"#cccccc\"/>\n";
      } else if (b != 0) {
        const double xa = f.X(cell_edge(grid.lon, j, false)), xb = f.X(cell_edge(grid.lon, end - 1, true));
        o << "<rect x=\"" << num(xa) << "\" y=\"" << num(ya) << "\" width=\"" << num(xb - xa + 0.3) << "\" height=\""
          << num(yb - ya + 0.3) << "\" fill=\"" << band_colour(b, bands.n) << "\"/>\n";
      }
      j = end;
    }
  }
  o << "</g>\n";
}

std::string segment_path(const std::vector<Segment>& segs, const MapFrame& f) {
  std::string d;
  for (const auto& s : segs)
    d += "M" + num(f.X(s.x0)) + " " + num(f.Y(s.y0)) + "L" + num(f.X(s.x1)) + " " + num(f.Y(s.y1));
  return d;
}

// Contour lines at the band edges: solid for ridges, dashed for troughs; then the coastline.
void draw_lines(std::ostringstream& o, const arma::vec& pattern, const Grid& grid, const std::vector<Segment>& coast,
                const MapFrame& f, const Bands& bands) {
  const arma::uword nla = grid.n_lat(), nlo = grid.n_lon();
  arma::mat values(nla, nlo);
  for (arma::uword i = 0; i < nla; ++i)
    for (arma::uword j = 0; j < nlo; ++j) values(i, j) = pattern(i * nlo + j);
  for (int b = -bands.n; b <= bands.n; ++b) {
    if (b == 0) continue;
    const auto segs = contour_segments(values, grid.lon, grid.lat, b * bands.step);
    if (segs.empty()) continue;
    o << "<path class=\"contour\" d=\"" << segment_path(segs, f)
      << "\" fill=\"none\" stroke=\"#555\" stroke-width=\"0.6\"" << (b < 0 ? " stroke-dasharray=\"3 2\"" : "")
      << "/>\n";
  }
  if (!coast.empty())
    o << "<path class=\"coast\" d=\"" << segment_path(coast, f)
      << "\" fill=\"none\" stroke=\"#222\" stroke-width=\"1\" stroke-linecap=\"round\"/>\n";
}

// Graticule every 10 degrees (20 for wide domains), labelled outside the frame; then the frame.
void draw_graticule(std::ostringstream& o, const MapFrame& f) {
  const double gstep_lon = (f.x1 - f.x0) > 90 ? 20 : 10, gstep_lat = (f.y1 - f.y0) > 45 ? 20 : 10;
  o << "<g stroke=\"#888\" stroke-width=\"0.4\" stroke-dasharray=\"1 3\">\n";
  std::string labels;
  for (double lon = std::ceil(f.x0 / gstep_lon) * gstep_lon; lon <= f.x1 + 1e-9; lon += gstep_lon) {
    o << "<line x1=\"" << num(f.X(lon)) << "\" y1=\"" << num(f.top) << "\" x2=\"" << num(f.X(lon)) << "\" y2=\""
      << num(f.top + f.plot_h) << "\"/>\n";
    labels += "<text x=\"" + num(f.X(lon)) + "\" y=\"" + num(f.top + f.plot_h + 14) + "\" text-anchor=\"middle\">" +
              lon_label(lon) + "</text>\n";
  }
  for (double lat = std::ceil(f.y0 / gstep_lat) * gstep_lat; lat <= f.y1 + 1e-9; lat += gstep_lat) {
    o << "<line x1=\"" << num(f.left) << "\" y1=\"" << num(f.Y(lat)) << "\" x2=\"" << num(f.left + f.plot_w)
      << "\" y2=\"" << num(f.Y(lat)) << "\"/>\n";
    labels += "<text x=\"" + num(f.left - 4) + "\" y=\"" + num(f.Y(lat) + 4) + "\" text-anchor=\"end\">" +
              lat_label(lat) + "</text>\n";
  }
  o << "</g>\n" << labels;
  o << "<rect x=\"" << num(f.left) << "\" y=\"" << num(f.top) << "\" width=\"" << num(f.plot_w) << "\" height=\""
    << num(f.plot_h) << "\" fill=\"none\" stroke=\"#222\"/>\n";
}

// Colour bar: one box per band, highest at the top, each labelled at its edge nearer zero.
void draw_colour_bar(std::ostringstream& o, const MapFrame& f, const Bands& bands) {
  const double bar_x = f.left + f.plot_w + 14, box_h = std::min(18.0, f.plot_h / (2 * bands.n + 1));
  o << "<text x=\"" << num(bar_x) << "\" y=\"" << num(f.top - 6) << "\">metres</text>\n";
  for (int b = bands.n; b >= -bands.n; --b) {
    const double y = f.top + (bands.n - b) * box_h;
    o << "<rect x=\"" << num(bar_x) << "\" y=\"" << num(y) << "\" width=\"14\" height=\"" << num(box_h)
      << "\" fill=\"" << band_colour(b, bands.n) << "\" stroke=\"#888\" stroke-width=\"0.4\"/>\n";
    if (b != 0) {
      const double edge_v = b * bands.step;
      const double ly = b > 0 ? y + box_h : y;
      o << "<text x=\"" << num(bar_x + 18) << "\" y=\"" << num(ly + 4) << "\">" << (edge_v > 0 ? "+" : "")
        << static_cast<long>(std::lround(edge_v)) << "</text>\n";
    }
  }
}

}  // namespace

std::string regime_map_svg(const arma::vec& pattern, const Grid& grid, const std::vector<Segment>& coast,
                           const std::string& title, double scale, const std::string& regime_colour) {
  const arma::uword nla = grid.n_lat(), nlo = grid.n_lon();
  if (pattern.n_elem != grid.n_points() || nla < 2 || nlo < 2)
    throw InternalError("regime map: pattern of " + std::to_string(pattern.n_elem) + " values for a grid of " +
                        std::to_string(nla) + " x " + std::to_string(nlo));
  if (!(scale > 0)) scale = arma::abs(pattern).max();
  if (!(scale > 0)) scale = 1;
  const Bands bands(scale);
  const MapFrame f(grid);
  std::ostringstream o;
  o << "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 " << num(f.width()) << " " << num(f.height())
    << "\" width=\"" << num(f.width()) << "\" height=\"" << num(f.height())
    << "\" font-family=\"sans-serif\" font-size=\"11\" role=\"img\">\n";
  o << "<title>" << html_escape(title) << "</title>\n";
  if (!regime_colour.empty())
    o << "<rect class=\"regime-swatch\" x=\"" << num(f.left - 22) << "\" y=\"7\" width=\"14\" height=\"14\" fill=\""
      << html_escape(regime_colour) << "\" stroke=\"#222\" stroke-width=\"0.5\"/>\n";
  o << "<text x=\"" << f.left << "\" y=\"18\" font-size=\"13\" font-weight=\"bold\">" << html_escape(title)
    << "</text>\n";
  draw_cells(o, pattern, grid, f, bands);
  draw_lines(o, pattern, grid, coast, f, bands);
  draw_graticule(o, f);
  draw_colour_bar(o, f, bands);
  o << "</svg>\n";
  return o.str();
}

}  // namespace isohypse
