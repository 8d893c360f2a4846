// HeightDataset (src/io/dataset.cpp and its steps): a small file written with
// netCDF-C, opened, its axes and level found, and reads outside the file
// refused as a bug of the caller (InternalError), not the user's input.
#include <doctest/doctest.h>

#include <filesystem>
#include <string>
#include <vector>

#include "io/netcdf_file.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/dataset.hpp"

using namespace isohypse;

namespace {

// 3 days x level (850, 500 hPa, stored in Pa) x 3 latitudes (descending) x 4
// longitudes of geopotential (m2 s-2), value = 9.80665 * (5000 + 100 t + 10 a + b).
std::string write_small_file(const std::string& name) {
  namespace fs = std::filesystem;
  const std::string path = (fs::temp_directory_path() / name).string();
  const std::vector<double> lat = {50, 40, 30}, lon = {0, 90, 180, 270}, lev = {85000, 50000};
  const std::size_t nt = 3;
  std::vector<float> z(nt * lev.size() * lat.size() * lon.size());
  std::size_t i = 0;
  for (std::size_t t = 0; t < nt; ++t)
    for (std::size_t l = 0; l < lev.size(); ++l)
      for (std::size_t a = 0; a < lat.size(); ++a)
        for (std::size_t b = 0; b < lon.size(); ++b)
          z[i++] = static_cast<float>(kStandardGravity * (5000 + 100 * t + 10 * a + b + 1000 * l));
  nc::File f = nc::File::create(path);
  const int dt = f.def_dim("time", nt), dl = f.def_dim("plev", lev.size()), da = f.def_dim("lat", lat.size()),
            db = f.def_dim("lon", lon.size());
  const int vt = f.def_var("time", NC_DOUBLE, {dt});
  f.put_att(vt, "units", "days since 2001-01-01");
  const int vl = f.def_var("plev", NC_DOUBLE, {dl});
  f.put_att(vl, "units", "Pa");
  const int va = f.def_var("lat", NC_DOUBLE, {da});
  f.put_att(va, "units", "degrees_north");
  const int vb = f.def_var("lon", NC_DOUBLE, {db});
  f.put_att(vb, "units", "degrees_east");
  const int vz = f.def_var("z", NC_FLOAT, {dt, dl, da, db});
  f.put_att(vz, "units", "m2 s-2");
  f.end_define();
  f.write_all(vt, {0, 1, 2});
  f.write_all(vl, lev);
  f.write_all(va, lat);
  f.write_all(vb, lon);
  f.write(vz, {0, 0, 0, 0}, {nt, lev.size(), lat.size(), lon.size()}, z.data());
  f.close();
  return path;
}

}  // namespace

TEST_CASE("dataset: axes, level in Pa and geopotential of a small file") {
  const std::string path = write_small_file("isohypse_dataset_test_axes.nc");
  const HeightDataset ds = HeightDataset::open(path);
  const DatasetInfo& in = ds.info();
  CHECK(in.variable == "z");
  CHECK(in.geopotential);
  CHECK(in.levels == std::vector<double>{850, 500});
  CHECK(in.level_index == 1);
  CHECK(in.lat_descending());
  CHECK(in.times.size() == 3);
  CHECK(in.members == 1);
  CHECK(in.global_in_lon());
  const DomainSelection all = ds.select(std::nullopt);
  CHECK(all.grid.lat(0) == 30);
  const arma::fmat h = ds.read(all, 1, 1);
  // Day 1, 500 hPa, 30N (file row 2), 90E: 5000 + 100 + 20 + 1 + 1000 m.
  CHECK(h(0 * 4 + 1, 0) == doctest::Approx(6121.0).epsilon(1e-6));
  std::filesystem::remove(path);
}

TEST_CASE("dataset: a read past the file's steps or members is an internal error") {
  const std::string path = write_small_file("isohypse_dataset_test_bounds.nc");
  const HeightDataset ds = HeightDataset::open(path);
  const DomainSelection all = ds.select(std::nullopt);
  RawBlock raw;
  CHECK_THROWS_AS(ds.read_raw(all, 2, 2, 0, raw), InternalError);
  CHECK_THROWS_AS(ds.read_raw(all, 0, 1, 1, raw), InternalError);
  CHECK_NOTHROW(ds.read_raw(all, 0, 3, 0, raw));
  std::filesystem::remove(path);
}
