#include "io/netcdf_file.hpp"

#include <hdf5.h>

#include <filesystem>
#include <utility>

#include "isohypse/base/error.hpp"

namespace isohypse::nc {

void check(int status, std::string_view call, const std::string& path, std::string_view what) {
  if (status == NC_NOERR) return;
  std::string msg = path + ": ";
  if (!what.empty()) msg += std::string(what) + ": ";
  msg += nc_strerror(status);
  msg += " (" + std::string(call) + ")";
  if (status == ENOENT) throw InputError(msg);
  throw DataError(msg);
}

// netCDF-C turns HDF5's error printing off for the thread that first opens
// a file only; on other threads (the service's worker) HDF5 would print its
// whole error stack for every attribute netCDF merely probes. Each thread
// turns it off before its first open; netCDF's own return codes carry the errors.
static void quiet_hdf5_errors() {
  thread_local bool done = false;
  if (!done) {
    H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);
    done = true;
  }
}

File File::open(const std::string& path) {
  quiet_hdf5_errors();
  std::error_code ec;
  if (!std::filesystem::exists(path, ec)) throw InputError(path + ": no such file");
  if (std::filesystem::is_directory(path, ec)) throw InputError(path + ": is a folder, not a file");
  int ncid = -1;
  int status = nc_open(path.c_str(), NC_NOWRITE, &ncid);
  if (status != NC_NOERR) {
    std::string why = nc_strerror(status);
    if (status == NC_ENOTNC)
      why = "not a NetCDF or HDF5 file (or the file is truncated or damaged)";
    else if (status == NC_EHDFERR)
      why += ": the HDF5 layer cannot read it (a NetCDF-4 file that is truncated or damaged)";
    throw DataError(path + ": cannot open: " + why);
  }
  File f(ncid, path);
  f.check_classic_size();
  return f;
}

// netCDF-C reads a truncated NetCDF-3 file without complaint (missing bytes
// come back as fill values), so compare the file's size with the bytes its
// variables need. HDF5-based files fail at open or read on their own.
void File::check_classic_size() const {
  int fmt = 0;
  check(nc_inq_format(ncid_, &fmt), "nc_inq_format", path_);
  if (fmt != NC_FORMAT_CLASSIC && fmt != NC_FORMAT_64BIT_OFFSET && fmt != NC_FORMAT_64BIT_DATA) return;
  std::uintmax_t need = 0;
  for (const Var& v : vars()) {
    std::size_t size = 0;
    check(nc_inq_type(ncid_, v.type, nullptr, &size), "nc_inq_type", path_, v.name);
    std::uintmax_t n = size;
    for (int d : v.dims) n *= dim(d).length;
    need += (n + 3) / 4 * 4;
  }
  std::error_code ec;
  std::uintmax_t have = std::filesystem::file_size(path_, ec);
  if (!ec && have < need)
    throw DataError(path_ + ": the file is truncated (" + std::to_string(have) + " bytes, but its variables need at least " +
                    std::to_string(need) + ")");
}

File File::create(const std::string& path, bool classic, bool offset64) {
  quiet_hdf5_errors();
  int mode = NC_CLOBBER;
  if (offset64) mode |= NC_64BIT_OFFSET;
  else if (!classic) mode |= NC_NETCDF4;
  int ncid = -1;
  int status = nc_create(path.c_str(), mode, &ncid);
  if (status != NC_NOERR) throw InputError(path + ": cannot create: " + nc_strerror(status));
  return File(ncid, path);
}

File::File(File&& other) noexcept : ncid_(std::exchange(other.ncid_, -1)), path_(std::move(other.path_)) {}

File& File::operator=(File&& other) noexcept {
  if (this != &other) {
    if (ncid_ >= 0) nc_close(ncid_);
    ncid_ = std::exchange(other.ncid_, -1);
    path_ = std::move(other.path_);
  }
  return *this;
}

File::~File() {
  if (ncid_ >= 0) nc_close(ncid_);
}

void File::close() {
  if (ncid_ < 0) return;
  int id = std::exchange(ncid_, -1);
  check(nc_close(id), "nc_close", path_);
}

std::string File::format_name() const {
  int fmt = 0;
  check(nc_inq_format(ncid_, &fmt), "nc_inq_format", path_);
  switch (fmt) {
    case NC_FORMAT_CLASSIC: return "NetCDF-3 classic";
    case NC_FORMAT_64BIT_OFFSET: return "NetCDF-3 64-bit offset";
    case NC_FORMAT_64BIT_DATA: return "NetCDF-3 64-bit data";
    case NC_FORMAT_NETCDF4: return "NetCDF-4";
    case NC_FORMAT_NETCDF4_CLASSIC: return "NetCDF-4 classic model";
    default: return "unknown format " + std::to_string(fmt);
  }
}

std::vector<Dim> File::dims() const {
  int n = 0;
  check(nc_inq_ndims(ncid_, &n), "nc_inq_ndims", path_);
  std::vector<Dim> out;
  for (int i = 0; i < n; ++i) out.push_back(dim(i));
  return out;
}

Dim File::dim(int dimid) const {
  char name[NC_MAX_NAME + 1] = {};
  std::size_t len = 0;
  check(nc_inq_dim(ncid_, dimid, name, &len), "nc_inq_dim", path_);
  int nunlim = 0;
  int unlim[NC_MAX_DIMS];
  bool is_unlim = false;
  if (nc_inq_unlimdims(ncid_, &nunlim, unlim) == NC_NOERR)
    for (int i = 0; i < nunlim; ++i) is_unlim = is_unlim || unlim[i] == dimid;
  return Dim{dimid, name, len, is_unlim};
}

std::optional<Dim> File::find_dim(const std::string& name) const {
  int id = -1;
  if (nc_inq_dimid(ncid_, name.c_str(), &id) != NC_NOERR) return std::nullopt;
  return dim(id);
}

std::vector<Var> File::vars() const {
  int n = 0;
  check(nc_inq_nvars(ncid_, &n), "nc_inq_nvars", path_);
  std::vector<Var> out;
  for (int i = 0; i < n; ++i) out.push_back(var(i));
  return out;
}

Var File::var(int varid) const {
  char name[NC_MAX_NAME + 1] = {};
  nc_type type = NC_NAT;
  int ndims = 0;
  check(nc_inq_var(ncid_, varid, name, &type, &ndims, nullptr, nullptr), "nc_inq_var", path_);
  std::vector<int> dims(static_cast<std::size_t>(ndims));
  if (ndims > 0) check(nc_inq_vardimid(ncid_, varid, dims.data()), "nc_inq_vardimid", path_, name);
  return Var{varid, name, type, dims};
}

std::optional<Var> File::find_var(const std::string& name) const {
  int id = -1;
  if (nc_inq_varid(ncid_, name.c_str(), &id) != NC_NOERR) return std::nullopt;
  return var(id);
}

std::optional<Var> File::coordinate_var(const Dim& d) const {
  auto v = find_var(d.name);
  if (v && v->dims.size() == 1 && v->dims[0] == d.id) return v;
  return std::nullopt;
}

std::string File::var_label(int varid) const {
  if (varid == NC_GLOBAL) return "global attributes";
  return "variable '" + var(varid).name + "'";
}

bool File::has_att(int varid, const std::string& name) const {
  return nc_inq_att(ncid_, varid, name.c_str(), nullptr, nullptr) == NC_NOERR;
}

std::optional<std::string> File::text_att(int varid, const std::string& name) const {
  nc_type type = NC_NAT;
  std::size_t len = 0;
  if (nc_inq_att(ncid_, varid, name.c_str(), &type, &len) != NC_NOERR) return std::nullopt;
  if (type == NC_CHAR) {
    std::string s(len, '\0');
    if (len) check(nc_get_att_text(ncid_, varid, name.c_str(), s.data()), "nc_get_att_text", path_, name);
    while (!s.empty() && s.back() == '\0') s.pop_back();
    return s;
  }
  if (type == NC_STRING && len >= 1) {
    std::vector<char*> p(len, nullptr);
    check(nc_get_att_string(ncid_, varid, name.c_str(), p.data()), "nc_get_att_string", path_, name);
    std::string s = p[0] ? p[0] : "";
    nc_free_string(len, p.data());
    return s;
  }
  return std::nullopt;
}

std::optional<std::vector<double>> File::num_att(int varid, const std::string& name) const {
  nc_type type = NC_NAT;
  std::size_t len = 0;
  if (nc_inq_att(ncid_, varid, name.c_str(), &type, &len) != NC_NOERR) return std::nullopt;
  if (type == NC_CHAR || type == NC_STRING) return std::nullopt;
  std::vector<double> v(len);
  if (len) check(nc_get_att_double(ncid_, varid, name.c_str(), v.data()), "nc_get_att_double", path_,
                 var_label(varid) + " attribute " + name);
  return v;
}

std::vector<std::string> File::att_names(int varid) const {
  int natts = 0;
  if (varid == NC_GLOBAL) check(nc_inq_natts(ncid_, &natts), "nc_inq_natts", path_);
  else check(nc_inq_varnatts(ncid_, varid, &natts), "nc_inq_varnatts", path_);
  std::vector<std::string> out;
  for (int i = 0; i < natts; ++i) {
    char name[NC_MAX_NAME + 1] = {};
    check(nc_inq_attname(ncid_, varid, i, name), "nc_inq_attname", path_);
    out.emplace_back(name);
  }
  return out;
}

std::vector<double> File::read_all(int varid) const {
  Var v = var(varid);
  std::vector<std::size_t> start(v.dims.size(), 0), count;
  for (int d : v.dims) count.push_back(dim(d).length);
  std::vector<double> out;
  read(varid, start, count, out);
  return out;
}

static std::size_t product(const std::vector<std::size_t>& c) {
  std::size_t n = 1;
  for (auto x : c) n *= x;
  return n;
}

void File::read(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
                std::vector<double>& out) const {
  out.resize(product(count));
  if (out.empty()) return;
  check(nc_get_vara_double(ncid_, varid, start.data(), count.data(), out.data()), "nc_get_vara_double",
        path_, var_label(varid));
}

void File::read(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
                std::vector<float>& out) const {
  out.resize(product(count));
  if (out.empty()) return;
  read(varid, start, count, out.data());
}

void File::read(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
                float* out) const {
  if (product(count) == 0) return;
  check(nc_get_vara_float(ncid_, varid, start.data(), count.data(), out), "nc_get_vara_float", path_,
        var_label(varid));
}

int File::def_dim(const std::string& name, std::size_t length) {
  int id = -1;
  check(nc_def_dim(ncid_, name.c_str(), length == 0 ? NC_UNLIMITED : length, &id), "nc_def_dim", path_, name);
  return id;
}

int File::def_var(const std::string& name, nc_type type, const std::vector<int>& dimids) {
  int id = -1;
  check(nc_def_var(ncid_, name.c_str(), type, static_cast<int>(dimids.size()), dimids.data(), &id),
        "nc_def_var", path_, name);
  return id;
}

void File::deflate(int varid, int level) {
  check(nc_def_var_deflate(ncid_, varid, 1, 1, level), "nc_def_var_deflate", path_, var_label(varid));
}

void File::put_att(int varid, const std::string& name, const std::string& text) {
  check(nc_put_att_text(ncid_, varid, name.c_str(), text.size(), text.c_str()), "nc_put_att_text", path_, name);
}

void File::put_att(int varid, const std::string& name, nc_type type, const std::vector<double>& values) {
  check(nc_put_att_double(ncid_, varid, name.c_str(), type, values.size(), values.data()), "nc_put_att_double",
        path_, name);
}

void File::end_define() { check(nc_enddef(ncid_), "nc_enddef", path_); }

void File::write(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
                 const double* data) {
  check(nc_put_vara_double(ncid_, varid, start.data(), count.data(), data), "nc_put_vara_double", path_,
        var_label(varid));
}
void File::write(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
                 const float* data) {
  check(nc_put_vara_float(ncid_, varid, start.data(), count.data(), data), "nc_put_vara_float", path_,
        var_label(varid));
}
void File::write(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
                 const short* data) {
  check(nc_put_vara_short(ncid_, varid, start.data(), count.data(), data), "nc_put_vara_short", path_,
        var_label(varid));
}
void File::write(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
                 const int* data) {
  check(nc_put_vara_int(ncid_, varid, start.data(), count.data(), data), "nc_put_vara_int", path_,
        var_label(varid));
}
void File::write_all(int varid, const std::vector<double>& data) {
  Var v = var(varid);
  std::vector<std::size_t> start(v.dims.size(), 0), count;
  for (int d : v.dims) count.push_back(dim(d).length);
  write(varid, start, count, data.data());
}
void File::write_text(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
                      const char* data) {
  check(nc_put_vara_text(ncid_, varid, start.data(), count.data(), data), "nc_put_vara_text", path_,
        var_label(varid));
}

}  // namespace isohypse::nc
