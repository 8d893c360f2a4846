#include "grib_files.hpp"

#include <eccodes.h>

#include <algorithm>
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
void set_string(codes_handle* h, const char* key, const char* v) {
  std::size_t n = 0;
  must(codes_set_string(h, key, v, &n), key);
}

// Messages appended to a temporary file, renamed to `path` by finish().
class MessageFile {
public:
  explicit MessageFile(std::string path)
      : path_(std::move(path)), tmp_(path_ + ".tmp"), out_(std::fopen(tmp_.c_str(), "wb"), &std::fclose) {
    if (!out_) throw std::runtime_error("cannot write " + tmp_);
  }
  void append(codes_handle* h) {
    const void* bytes = nullptr;
    std::size_t size = 0;
    must(codes_get_message(h, &bytes, &size), "message");
    if (std::fwrite(bytes, 1, size, out_.get()) != size) throw std::runtime_error("cannot write " + tmp_);
  }
  void finish() {
    if (std::fclose(out_.release()) != 0) throw std::runtime_error("cannot write " + tmp_);
    std::filesystem::rename(tmp_, path_);
  }

private:
  std::string path_, tmp_;
  std::unique_ptr<std::FILE, int (*)(std::FILE*)> out_;
};

// A GRIB 2 message of 500 hPa `param_id` on the grid of `lat` (in storage
// order: rows from lat.front()) and `lon` (eastward), packed as asked.
Handle template_on(const std::vector<double>& lat, const std::vector<double>& lon, long param_id,
                   const char* packing, long bits) {
  Handle h(codes_grib_handle_new_from_samples(nullptr, "regular_ll_pl_grib2"));
  if (!h) throw std::runtime_error("ecCodes: the sample regular_ll_pl_grib2 is missing");
  auto east = [](double x) { return std::fmod(x + 360.0, 360.0); };  // GRIB 2 longitudes lie in 0..360
  set_long(h.get(), "Ni", static_cast<long>(lon.size()));
  set_long(h.get(), "Nj", static_cast<long>(lat.size()));
  set_double(h.get(), "latitudeOfFirstGridPointInDegrees", lat.front());
  set_double(h.get(), "latitudeOfLastGridPointInDegrees", lat.back());
  set_double(h.get(), "longitudeOfFirstGridPointInDegrees", east(lon.front()));
  set_double(h.get(), "longitudeOfLastGridPointInDegrees", east(lon.back()));
  set_double(h.get(), "iDirectionIncrementInDegrees", std::abs(lon[1] - lon[0]));
  set_double(h.get(), "jDirectionIncrementInDegrees", std::abs(lat[1] - lat[0]));
  set_long(h.get(), "jScansPositively", lat[1] > lat[0] ? 1 : 0);
  set_long(h.get(), "paramId", param_id);
  set_string(h.get(), "typeOfLevel", "isobaricInhPa");
  set_long(h.get(), "level", 500);
  set_long(h.get(), "dataTime", 0);
  set_long(h.get(), "indicatorOfUnitOfTimeRange", 1);  // hours
  set_string(h.get(), "packingType", packing);
  set_long(h.get(), "bitsPerValue", bits);
  return h;
}

// An ensemble message (product definition template 4.1) of geopotential
// height on the forecast grid, rows north to south.
Handle member_template(int members, const char* packing, long bits) {
  std::vector<double> lat = forecast_lat();
  std::reverse(lat.begin(), lat.end());
  Handle h = template_on(lat, forecast_lon(), 156, packing, bits);  // geopotential height, gpm
  set_long(h.get(), "productDefinitionTemplateNumber", 1);
  set_long(h.get(), "numberOfForecastsInEnsemble", members);
  return h;
}

// Every member and lead of one initialisation's `runs`, appended to `file`.
void append_run(const Surface& surface, const Date& init, const std::vector<Trajectory>& runs, codes_handle* msg,
                MessageFile& file) {
  const std::size_t n_lat = forecast_lat().size(), n_lon = forecast_lon().size();
  const auto members = static_cast<arma::uword>(runs.size());
  const arma::mat h = member_heights(surface, runs);  // points (latitude-major, ascending) x (member, lead)
  set_long(msg, "dataDate", init.year * 10000L + init.month * 100L + init.day);
  std::vector<double> values(n_lat * n_lon);
  for (arma::uword m = 0; m < members; ++m)
    for (int l = 0; l < kLeads; ++l) {
      set_long(msg, "typeOfProcessedData", m == 0 ? 3 : 4);  // control, perturbed
      set_long(msg, "perturbationNumber", static_cast<long>(m));
      set_long(msg, "forecastTime", 24L * l);
      // Rows north to south.
      for (std::size_t j = 0; j < n_lat; ++j)
        for (std::size_t i = 0; i < n_lon; ++i)
          values[j * n_lon + i] = h((n_lat - 1 - j) * n_lon + i, m * kLeads + static_cast<arma::uword>(l));
      must(codes_set_double_array(msg, "values", values.data(), values.size()), "values");
      file.append(msg);
    }
}

}  // namespace

void write_model_run_grib(const Surface& surface, const Date& init, const std::vector<Trajectory>& runs,
                          const std::string& path) {
  MessageFile file(path);
  Handle msg = member_template(static_cast<int>(runs.size()), "grid_simple", 24);
  append_run(surface, init, runs, msg.get(), file);
  file.finish();
}

void write_reforecasts_grib(const Surface& surface, const std::vector<GribRun>& runs, const std::string& path) {
  MessageFile file(path);
  Handle msg = member_template(static_cast<int>(runs.front().members.size()), "grid_ccsds", 16);
  for (const GribRun& r : runs) append_run(surface, r.init, r.members, msg.get(), file);
  file.finish();
}

void write_reanalysis_year_grib(const std::vector<double>& lat, const std::vector<double>& lon,
                                const std::vector<Date>& days, const arma::mat& phi, const std::string& path) {
  constexpr double kMissing = 9.999e20;  // marks the bitmap's missing points when writing
  MessageFile file(path);
  Handle msg = template_on(lat, lon, 129, "grid_ccsds", 16);  // geopotential, m2 s-2
  set_long(msg.get(), "typeOfProcessedData", 0);             // analysis
  set_long(msg.get(), "forecastTime", 0);
  std::vector<double> values(phi.n_rows);
  for (std::size_t t = 0; t < days.size(); ++t) {
    bool holes = false;
    for (arma::uword p = 0; p < phi.n_rows; ++p) {
      const double v = phi(p, t);
      holes = holes || std::isnan(v);
      values[p] = std::isnan(v) ? kMissing : v;
    }
    set_long(msg.get(), "dataDate", days[t].year * 10000L + days[t].month * 100L + days[t].day);
    set_double(msg.get(), "missingValue", kMissing);
    set_long(msg.get(), "bitmapPresent", holes ? 1 : 0);
    must(codes_set_double_array(msg.get(), "values", values.data(), values.size()), "values");
    file.append(msg.get());
  }
  file.finish();
}

}  // namespace demo
