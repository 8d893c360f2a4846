// Forecast files (src/forecast.cpp): valid dates of model-calendar
// initialisations, grouping a file into lead days, and the bilinear regridder.
// Calendar arithmetic is checked against the CF Conventions 1.10 calendar
// definitions (ch. 4.4.1); every expected date below was also computed with
// cftime 1.6 (e.g. cftime.DatetimeNoLeap(2024, 2, 27) + timedelta(days=2)
// -> 2024-03-01) and with Python's datetime for the real calendar.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <functional>
#include <string>
#include <vector>

#include "isohypse/io/dataset.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/forecast.hpp"
#include "io/netcdf_file.hpp"

using namespace isohypse;

namespace {

Initialisation starting(int y, int m, int d, Calendar cal) {
  Initialisation in;
  in.init = make_date(y, m, d, cal);
  in.init_real = to_real_calendar(in.init);
  return in;
}

Grid regular(double lat0, double lat1, double dlat, double lon0, double lon1, double dlon) {
  Grid g;
  g.lat = arma::regspace(lat0, dlat, lat1);
  g.lon = arma::regspace(lon0, dlon, lon1);
  return g;
}

// A function bilinear interpolation reproduces exactly: a + b lat + c lon + d lat lon.
double planar(double lat, double lon) { return 5000.0 + 3.0 * lat - 0.7 * lon + 0.01 * lat * lon; }

arma::fmat sample(const Grid& g, double lon_shift = 0.0) {
  arma::fmat v(g.n_points(), 2);
  for (arma::uword a = 0; a < g.n_lat(); ++a)
    for (arma::uword b = 0; b < g.n_lon(); ++b) {
      v(a * g.n_lon() + b, 0) = static_cast<float>(planar(g.lat(a), g.lon(b) + lon_shift));
      v(a * g.n_lon() + b, 1) = static_cast<float>(-planar(g.lat(a), g.lon(b) + lon_shift));
    }
  return v;
}

std::string thrown_message(const std::function<void()>& f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("forecast: valid dates of a noleap initialisation across 29 February and month ends") {
  Initialisation in = starting(2024, 2, 27, Calendar::NoLeap);
  CHECK(to_string(in.init_real) == "2024-02-27");
  CHECK(to_string(in.valid_model(1)) == "2024-02-28");
  CHECK(to_string(in.valid_real(1)) == "2024-02-28");
  // The model has no 29 February; the real calendar of 2024 has.
  CHECK(to_string(in.valid_model(2)) == "2024-03-01");
  CHECK(to_string(in.valid_real(2)) == "2024-02-29");
  CHECK(in.valid_model(2).calendar == Calendar::NoLeap);
  CHECK(in.valid_real(2).calendar == Calendar::ProlepticGregorian);

  // 45 days from 1 February: the two calendars part by one day after February.
  Initialisation feb = starting(2024, 2, 1, Calendar::NoLeap);
  CHECK(to_string(feb.valid_model(45)) == "2024-03-18");
  CHECK(to_string(feb.valid_real(45)) == "2024-03-17");

  // A common year: both calendars agree across month and year ends.
  Initialisation dec = starting(2025, 12, 30, Calendar::NoLeap);
  CHECK(to_string(dec.valid_model(2)) == "2026-01-01");
  CHECK(to_string(dec.valid_real(2)) == "2026-01-01");
  CHECK(to_string(dec.valid_model(31)) == "2026-01-30");
  CHECK(to_string(dec.valid_real(31)) == "2026-01-30");
  CHECK(to_string(dec.valid_model(0)) == "2025-12-30");
}

TEST_CASE("forecast: valid dates of a 360_day initialisation on 29 and 30 February") {
  // calendar.hpp: a 360_day day without a real twin maps to the month's last real day.
  Initialisation in = starting(2001, 2, 29, Calendar::Day360);
  CHECK(to_string(in.init_real) == "2001-02-28");
  CHECK(to_string(in.valid_model(1)) == "2001-02-30");
  CHECK(to_string(in.valid_real(1)) == "2001-03-01");
  CHECK(to_string(in.valid_model(2)) == "2001-03-01");
  CHECK(to_string(in.valid_real(2)) == "2001-03-02");

  Initialisation jan = starting(2001, 1, 30, Calendar::Day360);
  CHECK(to_string(jan.valid_model(1)) == "2001-02-01");  // every 360_day month has 30 days
  CHECK(to_string(jan.valid_real(1)) == "2001-01-31");

  Initialisation leap = starting(2000, 2, 30, Calendar::Day360);
  CHECK(to_string(leap.init_real) == "2000-02-29");
  CHECK(to_string(leap.valid_model(1)) == "2000-03-01");
  CHECK(to_string(leap.valid_real(1)) == "2000-03-01");

  // Over 45 days the model calendar runs ahead of the real one's dates.
  Initialisation late = starting(2001, 2, 20, Calendar::Day360);
  CHECK(to_string(late.valid_model(45)) == "2001-04-05");
  CHECK(to_string(late.valid_real(45)) == "2001-04-06");
}

TEST_CASE("forecast: a 360_day file with 12-hourly steps across 30 February becomes daily leads") {
  namespace fs = std::filesystem;
  const std::string path = (fs::temp_directory_path() / "isohypse_forecast_test_360.nc").string();
  const std::vector<double> lat = {30, 40, 50}, lon = {200, 210, 220, 230};
  const std::size_t nm = 2, nt = 6;  // 3 days of 12-hourly steps from 2001-02-29
  std::vector<float> z(nm * nt * lat.size() * lon.size());
  auto at = [&](std::size_t m, std::size_t t, std::size_t a, std::size_t b) {
    return ((m * nt + t) * lat.size() + a) * lon.size() + b;
  };
  for (std::size_t m = 0; m < nm; ++m)
    for (std::size_t t = 0; t < nt; ++t)
      for (std::size_t a = 0; a < lat.size(); ++a)
        for (std::size_t b = 0; b < lon.size(); ++b)
          z[at(m, t, a, b)] = static_cast<float>(5500 + 100 * m + 10 * t + a + 0.1 * b);
  {
    nc::File f = nc::File::create(path);
    int dm = f.def_dim("number", nm), dt = f.def_dim("time", nt), da = f.def_dim("latitude", lat.size()),
        db = f.def_dim("longitude", lon.size());
    int vm = f.def_var("number", NC_INT, {dm});
    int vt = f.def_var("time", NC_DOUBLE, {dt});
    f.put_att(vt, "units", "hours since 2001-02-29 00:00:00");
    f.put_att(vt, "calendar", "360_day");
    int va = f.def_var("latitude", NC_DOUBLE, {da});
    f.put_att(va, "units", "degrees_north");
    int vb = f.def_var("longitude", NC_DOUBLE, {db});
    f.put_att(vb, "units", "degrees_east");
    int vz = f.def_var("z500", NC_FLOAT, {dm, dt, da, db});
    f.put_att(vz, "standard_name", "geopotential_height");
    f.put_att(vz, "units", "m");
    f.end_define();
    f.write_all(vm, {0, 1});
    f.write_all(vt, {0, 12, 24, 36, 48, 60});
    f.write_all(va, lat);
    f.write_all(vb, lon);
    f.write(vz, {0, 0, 0, 0}, {nm, nt, lat.size(), lon.size()}, z.data());
    f.close();
  }
  Domain dom;
  dom.lat_min = 30;
  dom.lat_max = 50;
  dom.lon_west = 200;
  dom.lon_east = 230;
  std::vector<Initialisation> inits = scan_forecasts({path}, "", dom);
  REQUIRE(inits.size() == 1);
  const Initialisation& in = inits.front();
  CHECK(to_string(in.init) == "2001-02-29");
  CHECK(in.init.calendar == Calendar::Day360);
  CHECK(to_string(in.init_real) == "2001-02-28");
  CHECK(in.n_leads == 3);
  REQUIRE(in.lead_steps.size() == 3);
  CHECK(in.lead_steps[1] == std::vector<std::size_t>{2, 3});
  CHECK(in.members.size() == nm);
  CHECK(to_string(in.valid_model(2)) == "2001-03-01");

  Regridder same(in.native_grid, in.native_grid, path);
  CHECK(same.identity());
  std::vector<arma::fmat> members = read_members(in, same, "");
  REQUIRE(members.size() == nm);
  // Lead day 1 of member 1 at (40N, 210E): the mean of steps 2 and 3.
  const arma::uword p = 1 * lon.size() + 1;
  CHECK(members[1](p, 1) == doctest::Approx((z[at(1, 2, 1, 1)] + z[at(1, 3, 1, 1)]) / 2.0).epsilon(1e-7));
  CHECK(members[0](p, 2) == doctest::Approx((z[at(0, 4, 1, 1)] + z[at(0, 5, 1, 1)]) / 2.0).epsilon(1e-7));

  // Given the regime grid, a file that has exactly its points is read just
  // there (no margin, no interpolation), with the same values.
  Domain inner = dom;  // 40N, 210-220E: the file has a point beyond on every side
  inner.lat_min = 40;
  inner.lat_max = 40;
  inner.lon_west = 210;
  inner.lon_east = 220;
  const Grid exact_grid = HeightDataset::open(path).select(inner).grid;
  std::vector<Initialisation> widened = scan_forecasts({path}, "", inner);
  std::vector<Initialisation> exact = scan_forecasts({path}, "", inner, &exact_grid);
  REQUIRE(exact.size() == 1);
  CHECK(exact.front().native_grid.same_as(exact_grid));
  CHECK(exact.front().native_grid.n_points() < widened.front().native_grid.n_points());
  Regridder none(exact.front().native_grid, exact_grid, path);
  CHECK(none.identity());
  const Regridder pick(widened.front().native_grid, exact_grid, path);
  CHECK_FALSE(pick.identity());
  std::vector<arma::fmat> direct = read_members(exact.front(), none, "");
  std::vector<arma::fmat> picked = read_members(widened.front(), pick, "");
  REQUIRE(direct.size() == nm);
  for (std::size_t m = 0; m < nm; ++m) CHECK(arma::approx_equal(direct[m], picked[m], "absdiff", 0.0f));
  // for_each_member hands out the same heights, one member at a time.
  std::size_t calls = 0;
  for_each_member(exact.front(), none, "", [&](std::size_t m, arma::fmat& h) {
    CHECK(arma::approx_equal(h, direct[m], "absdiff", 0.0f));
    ++calls;
  });
  CHECK(calls == nm);
  // Reads and their completion may be split between threads in any order:
  // every member's raw block read first, then finished last to first.
  EnsembleReader reader({&exact.front()}, none, "");
  REQUIRE(reader.size() == nm);
  std::vector<EnsembleReader::Work> works(nm);
  for (std::size_t k = 0; k < nm; ++k) reader.read(k, works[k].raw);
  for (std::size_t k = nm; k-- > 0;) {
    reader.finish(k, works[k]);
    CHECK(reader.slot(k).member == k);
    CHECK(arma::approx_equal(works[k].heights, direct[k], "absdiff", 0.0f));
  }
  fs::remove(path);
}

TEST_CASE("regridder: bilinear interpolation reproduces a bilinear function of latitude and longitude exactly") {
  // Bilinear interpolation is exact for a + b x + c y + d x y on each cell
  // (Press et al. 2007, Numerical Recipes 3rd ed., §3.6, "Interpolation in two dimensions").
  const Grid from = regular(16, 84, 2, 164, 326, 2);
  const Grid to = regular(20.5, 79, 2.5, 170.3, 319.9, 3.1);
  Regridder r(from, to, "source.nc");
  CHECK_FALSE(r.identity());
  arma::fmat out = r.apply(sample(from));
  REQUIRE(out.n_rows == to.n_points());
  REQUIRE(out.n_cols == 2);
  arma::fmat want = sample(to);
  // Floats around 5000 m carry about 5e-4 m of rounding.
  CHECK(arma::abs(out - want).max() < 5e-3f);

  // Target longitudes given in another representative (-190 == 170) land on the same source points.
  Grid west = to;
  west.lon -= 360.0;
  arma::fmat out_west = Regridder(from, west, "source.nc").apply(sample(from));
  CHECK(arma::abs(out_west - want).max() < 5e-3f);
}

TEST_CASE("regridder: identity when the grids match") {
  const Grid g = regular(20, 80, 2.5, 170, 320, 2.5);
  Regridder r(g, g, "same.nc");
  CHECK(r.identity());
  arma::fmat v = sample(g);
  CHECK(arma::approx_equal(r.apply(v), v, "absdiff", 0.0f));
  // Nodes of a finer source that coincide with the target give the source values.
  const Grid fine = regular(15, 85, 1.25, 160, 330, 1.25);
  arma::fmat picked = Regridder(fine, g, "fine.nc").apply(sample(fine));
  CHECK(arma::abs(picked - v).max() < 5e-3f);
  // ... and exactly so: such points are picked, not weighted.
  const Grid coarse = regular(20, 80, 5, 170, 320, 5);
  const arma::fmat from_g = sample(g);
  arma::fmat sub = Regridder(g, coarse, "g.nc").apply(from_g);
  const arma::uword nlon = g.n_lon();
  for (arma::uword a = 0; a < coarse.n_lat(); ++a)
    for (arma::uword b = 0; b < coarse.n_lon(); ++b)
      CHECK(sub(a * coarse.n_lon() + b, 1) == from_g((2 * a) * nlon + 2 * b, 1));
}

TEST_CASE("regridder: a source grid that does not cover the target is refused, naming the file") {
  const Grid target = regular(20, 80, 2.5, 170, 320, 2.5);
  std::string lat_msg = thrown_message([&] { Regridder(regular(30, 84, 2, 164, 326, 2), target, "short_lat.nc"); });
  CHECK(lat_msg.find("short_lat.nc") != std::string::npos);
  CHECK(lat_msg.find("latitude") != std::string::npos);
  std::string lon_msg = thrown_message([&] { Regridder(regular(16, 84, 2, 164, 300, 2), target, "short_lon.nc"); });
  CHECK(lon_msg.find("short_lon.nc") != std::string::npos);
  CHECK(lon_msg.find("longitude") != std::string::npos);
  // Exactly covering the edges is enough.
  CHECK_NOTHROW(Regridder(regular(20, 80, 2, 170, 320, 2), target, "edges.nc"));
}
