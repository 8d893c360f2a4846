#include "grib_files.hpp"

#include <eccodes.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <memory>
#include <stdexcept>
#include <string>


namespace demo {

namespace {

using isohypse::Date;

struct HandleDeleter {
  void operator()(codes_handle* h) const { codes_handle_delete(h); }
};
using Handle = std::unique_ptr<codes_handle, HandleDeleter>;

void must(int status, const char* what) {
  if (status != 0) throw std::runtime_error(std::string("ecCodes: ") + what + ": " + codes_get_error_message(status));
}

void set_long(codes_handle* h, const char* key, long v) { must(codes_set_long(h, key, v), key); }
void set_double(codes_handle* h, const char* key, double v) { must(codes_set_double(h, key, v), key); }

// A GRIB 2 template for the forecast grid (latitudes north to south, as
// most providers store them), geopotential height at 500 hPa, one ensemble
// member (product definition template 4.1).
Handle grid_template(const Date& init, int members) {
  Handle h(codes_grib_handle_new_from_samples(nullptr, "regular_ll_pl_grib2"));
  if (!h) throw std::runtime_error("ecCodes: the sample regular_ll_pl_grib2 is missing");
  const std::vector<double> lat = forecast_lat(), lon = forecast_lon();
  set_long(h.get(), "Ni", static_cast<long>(lon.size()));
  set_long(h.get(), "Nj", static_cast<long>(lat.size()));
  set_double(h.get(), "latitudeOfFirstGridPointInDegrees", lat.back());
  set_double(h.get(), "latitudeOfLastGridPointInDegrees", lat.front());
  set_double(h.get(), "longitudeOfFirstGridPointInDegrees", lon.front());
  set_double(h.get(), "longitudeOfLastGridPointInDegrees", lon.back());
  set_double(h.get(), "iDirectionIncrementInDegrees", lon[1] - lon[0]);
  set_double(h.get(), "jDirectionIncrementInDegrees", lat[1] - lat[0]);
  set_long(h.get(), "jScansPositively", 0);
  set_long(h.get(), "productDefinitionTemplateNumber", 1);
  set_long(h.get(), "numberOfForecastsInEnsemble", members);
  set_long(h.get(), "paramId", 156);  // geopotential height, gpm
  must(codes_set_string(h.get(), "typeOfLevel", "isobaricInhPa", nullptr), "typeOfLevel");
  set_long(h.get(), "level", 500);
  set_long(h.get(), "dataDate", init.year * 10000L + init.month * 100L + init.day);
  set_long(h.get(), "dataTime", 0);
  set_long(h.get(), "indicatorOfUnitOfTimeRange", 1);  // hours
  set_long(h.get(), "bitsPerValue", 24);
  return h;
}

}  // namespace

void write_model_run_grib(const Surface& surface, const Date& init, const std::vector<Trajectory>& runs,
                          const std::string& path) {
  const std::vector<double> lat = forecast_lat(), lon = forecast_lon();
  const auto members = static_cast<arma::uword>(runs.size());
  arma::mat coefs(runs.front().coefs.n_rows, members * kLeads);
  for (arma::uword m = 0; m < members; ++m) coefs.cols(m * kLeads, (m + 1) * kLeads - 1) = runs[m].coefs;
  const arma::mat h = surface.heights(coefs);  // points (latitude-major, ascending) x (member, lead)
  const std::string tmp = path + ".tmp";
  std::unique_ptr<std::FILE, int (*)(std::FILE*)> out(std::fopen(tmp.c_str(), "wb"), &std::fclose);
  if (!out) throw std::runtime_error("cannot write " + tmp);
  Handle msg = grid_template(init, static_cast<int>(members));
  std::vector<double> values(lat.size() * lon.size());
  for (arma::uword m = 0; m < members; ++m)
    for (int l = 0; l < kLeads; ++l) {
      set_long(msg.get(), "typeOfProcessedData", m == 0 ? 3 : 4);  // control, perturbed
      set_long(msg.get(), "perturbationNumber", static_cast<long>(m));
      set_long(msg.get(), "forecastTime", 24L * l);
      // Rows north to south; the heights rounded to 0.5 m as the NetCDF files round them.
      for (std::size_t j = 0; j < lat.size(); ++j)
        for (std::size_t i = 0; i < lon.size(); ++i)
          values[j * lon.size() + i] =
              std::round(h((lat.size() - 1 - j) * lon.size() + i, m * kLeads + static_cast<arma::uword>(l)) * 2.0) /
              2.0;
      must(codes_set_double_array(msg.get(), "values", values.data(), values.size()), "values");
      const void* bytes = nullptr;
      std::size_t size = 0;
      must(codes_get_message(msg.get(), &bytes, &size), "message");
      if (std::fwrite(bytes, 1, size, out.get()) != size) throw std::runtime_error("cannot write " + tmp);
    }
  out.reset();
  std::filesystem::rename(tmp, path);
}

}  // namespace demo
