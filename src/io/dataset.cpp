#include "isohypse/io/dataset.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>
#include <set>
#include <sstream>

#include "isohypse/base/error.hpp"
#include "io/hdf5_chunks.hpp"
#include "io/netcdf_file.hpp"

namespace isohypse {

namespace {

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
  return s;
}

std::string compact_units(std::string u) {
  u = lower(u);
  std::string out;
  for (char c : u)
    if (!std::isspace(static_cast<unsigned char>(c)) && c != '*' && c != '^') out += c;
  return out;
}

bool is_lat_units(const std::string& u) {
  static const std::set<std::string> ok = {"degrees_north", "degree_north", "degree_n", "degrees_n", "degreen",
                                           "degreesn"};
  return ok.count(lower(u)) > 0;
}
bool is_lon_units(const std::string& u) {
  static const std::set<std::string> ok = {"degrees_east", "degree_east", "degree_e", "degrees_e", "degreee",
                                           "degreese"};
  return ok.count(lower(u)) > 0;
}

// Metres per unit of a pressure coordinate's units, or 0 when not pressure.
double hpa_per_unit(const std::string& units) {
  std::string u = lower(units);
  if (u == "hpa" || u == "mbar" || u == "millibar" || u == "millibars" || u == "mb") return 1.0;
  if (u == "pa") return 0.01;
  if (u == "kpa") return 10.0;
  return 0.0;
}

// Units of geopotential (m2 s-2) or of height (m), and the factor to metres.
// Returns false when the units are neither.
bool height_units(const std::string& units, bool& geopotential, double& to_m) {
  std::string u = compact_units(units);
  if (u == "m2s-2" || u == "m2/s2" || u == "m2s**-2" || u == "m2/s**2" || u == "m+2s-2") {
    geopotential = true;
    to_m = 1.0 / kStandardGravity;
    return true;
  }
  if (u == "m" || u == "gpm" || u == "meter" || u == "meters" || u == "metre" || u == "metres" ||
      u == "geopotentialmeters" || u == "geopotential_meters" || u == "gpmeter") {
    geopotential = false;
    to_m = 1.0;
    return true;
  }
  if (u == "dam" || u == "gpdm" || u == "decameters" || u == "decametres") {
    geopotential = false;
    to_m = 10.0;
    return true;
  }
  return false;
}

bool common_height_name(const std::string& name) {
  static const std::set<std::string> names = {"z", "zg", "hgt", "gh", "geopotential", "height", "phi",
                                              "z500", "hgt500", "gh500", "zg500", "geopotential_height", "h"};
  return names.count(lower(name)) > 0;
}

std::string join(const std::vector<std::string>& v, const std::string& sep = ", ") {
  std::string out;
  for (std::size_t i = 0; i < v.size(); ++i) out += (i ? sep : "") + v[i];
  return out;
}

std::string fmt(double v) {
  std::ostringstream o;
  o << v;
  return o.str();
}

std::string type_name(nc_type t) {
  switch (t) {
    case NC_BYTE: return "byte";
    case NC_UBYTE: return "ubyte";
    case NC_CHAR: return "char";
    case NC_SHORT: return "short";
    case NC_USHORT: return "ushort";
    case NC_INT: return "int";
    case NC_UINT: return "uint";
    case NC_INT64: return "int64";
    case NC_UINT64: return "uint64";
    case NC_FLOAT: return "float";
    case NC_DOUBLE: return "double";
    default: return "type " + std::to_string(t);
  }
}

// netCDF's default fill value for a type (used when no _FillValue is given).
std::optional<double> default_fill(nc_type t) {
  switch (t) {
    case NC_BYTE: return NC_FILL_BYTE;
    case NC_SHORT: return NC_FILL_SHORT;
    case NC_INT: return NC_FILL_INT;
    case NC_FLOAT: return static_cast<double>(NC_FILL_FLOAT);
    case NC_DOUBLE: return NC_FILL_DOUBLE;
    case NC_USHORT: return NC_FILL_USHORT;
    case NC_UINT: return NC_FILL_UINT;
    default: return std::nullopt;
  }
}

enum class Role { Time, Level, Lat, Lon, Member, Other };

}  // namespace

std::string DatasetInfo::lon_convention() const {
  if (file_lon.n_elem == 0) return "none";
  double lo = file_lon.min(), hi = file_lon.max();
  if (!global_in_lon()) return "regional " + fmt(lo) + ".." + fmt(hi);
  if (lo < 0) return "-180..180";
  return "0..360";
}

bool DatasetInfo::global_in_lon() const {
  if (file_lon.n_elem < 2) return false;
  double step = std::abs(file_lon(1) - file_lon(0));
  double span = std::abs(file_lon(file_lon.n_elem - 1) - file_lon(0));
  return span + step >= 360.0 - 1e-3 * step;
}

struct HeightDataset::Impl {
  nc::File file;
  DatasetInfo info;
  nc::Var var;
  std::vector<Role> roles;  // per dimension of var
  bool lat_before_lon = true;
  // Compressed NetCDF-4 variables: their chunks read directly (see hdf5_chunks.hpp).
  mutable std::unique_ptr<detail::ChunkReader> chunks;
  mutable bool chunks_tried = false;

  explicit Impl(nc::File f) : file(std::move(f)) {}

  [[noreturn]] void fail_data(const std::string& what) const { throw DataError(info.path + ": " + what); }
};

namespace {

std::vector<HeightCandidate> find_candidates(const nc::File& f) {
  std::vector<HeightCandidate> out;
  for (const nc::Var& v : f.vars()) {
    if (v.dims.size() < 2 || v.type == NC_CHAR || v.type == NC_STRING) continue;
    HeightCandidate c;
    c.name = v.name;
    c.standard_name = f.text_att(v.id, "standard_name").value_or("");
    c.units = f.text_att(v.id, "units").value_or("");
    c.long_name = f.text_att(v.id, "long_name").value_or("");
    for (int d : v.dims) c.dims.push_back(f.dim(d).name);
    bool geo = false;
    double to_m = 1;
    bool units_ok = height_units(c.units, geo, to_m);
    std::string sn = lower(c.standard_name);
    if (sn == "geopotential" || sn == "geopotential_height") {
      c.score += 3;
      c.geopotential = sn == "geopotential";
    }
    if (units_ok) {
      c.score += 2;
      c.geopotential = geo;
    }
    if (common_height_name(c.name)) c.score += 1;
    // Metres alone (score 2) is too weak: many variables are in metres.
    if (c.score >= 3 || (c.score >= 1 && c.standard_name.empty() && common_height_name(c.name) && units_ok)) {
      out.push_back(c);
    }
  }
  std::stable_sort(out.begin(), out.end(), [](const auto& a, const auto& b) { return a.score > b.score; });
  return out;
}

}  // namespace

std::vector<HeightCandidate> list_height_candidates(const std::string& path) {
  return find_candidates(nc::File::open(path));
}

HeightDataset::HeightDataset(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
HeightDataset::HeightDataset(HeightDataset&&) noexcept = default;
HeightDataset& HeightDataset::operator=(HeightDataset&&) noexcept = default;
HeightDataset::~HeightDataset() = default;
const DatasetInfo& HeightDataset::info() const { return impl_->info; }

HeightDataset HeightDataset::open(const std::string& path, const std::string& variable, double level_hpa) {
  auto impl = std::make_unique<Impl>(nc::File::open(path));
  nc::File& f = impl->file;
  DatasetInfo& info = impl->info;
  info.path = path;
  info.format = f.format_name();
  info.candidates = find_candidates(f);

  // 1. The variable.
  if (!variable.empty()) {
    auto v = f.find_var(variable);
    if (!v) {
      std::vector<std::string> names;
      for (const auto& x : f.vars()) names.push_back(x.name);
      throw InputError(path + ": no variable '" + variable + "' (the file has: " + join(names) + ")");
    }
    impl->var = *v;
  } else {
    if (info.candidates.empty()) {
      std::vector<std::string> names;
      for (const auto& x : f.vars()) names.push_back(x.name);
      throw DataError(path + ": no geopotential or geopotential height variable found (looked for standard_name "
                      "geopotential/geopotential_height, units m2 s-2 or m, names like z, zg, hgt, gh; the file "
                      "has: " + join(names) + "); name one with --variable");
    }
    const auto& best = info.candidates.front();
    std::vector<std::string> tied;
    for (const auto& c : info.candidates)
      if (c.score == best.score) tied.push_back(c.name);
    if (tied.size() > 1)
      throw DataError(path + ": more than one variable could be the height (" + join(tied) +
                      "); choose one with --variable");
    impl->var = *f.find_var(best.name);
  }
  info.variable = impl->var.name;
  info.units = f.text_att(impl->var.id, "units").value_or("");
  if (!height_units(info.units, info.geopotential, info.to_metres)) {
    std::string sn = lower(f.text_att(impl->var.id, "standard_name").value_or(""));
    throw DataError(path + ": variable '" + info.variable + "' has units '" + info.units +
                    "'; expected geopotential in m2 s-2 or geopotential height in m (gpm, dam)" +
                    (sn.empty() ? "" : " (standard_name " + sn + ")"));
  }

  // 2. Packing and missing values (all in packed units).
  const int vid = impl->var.id;
  Packing& pk = info.packing;
  pk.stored_type = type_name(impl->var.type);
  if (auto s = f.num_att(vid, "scale_factor"); s && !s->empty()) { pk.scale_factor = (*s)[0]; pk.packed = true; }
  if (auto o = f.num_att(vid, "add_offset"); o && !o->empty()) { pk.add_offset = (*o)[0]; pk.packed = true; }
  if (auto fv = f.num_att(vid, "_FillValue"); fv && !fv->empty()) pk.missing.push_back((*fv)[0]);
  else if (auto d = default_fill(impl->var.type)) pk.missing.push_back(*d);
  if (auto mv = f.num_att(vid, "missing_value"))
    for (double x : *mv)
      if (std::find(pk.missing.begin(), pk.missing.end(), x) == pk.missing.end()) pk.missing.push_back(x);
  if (auto vr = f.num_att(vid, "valid_range"); vr && vr->size() == 2) { pk.valid_min = (*vr)[0]; pk.valid_max = (*vr)[1]; }
  if (auto vmin = f.num_att(vid, "valid_min"); vmin && !vmin->empty()) pk.valid_min = (*vmin)[0];
  if (auto vmax = f.num_att(vid, "valid_max"); vmax && !vmax->empty()) pk.valid_max = (*vmax)[0];

  // 3. Roles of the dimensions.
  std::vector<std::string> dim_names;
  for (int d : impl->var.dims) {
    nc::Dim dim = f.dim(d);
    dim_names.push_back(dim.name);
    auto cv = f.coordinate_var(dim);
    std::string units = cv ? f.text_att(cv->id, "units").value_or("") : "";
    std::string sn = cv ? lower(f.text_att(cv->id, "standard_name").value_or("")) : "";
    std::string axis = cv ? lower(f.text_att(cv->id, "axis").value_or("")) : "";
    std::string n = lower(dim.name);
    Role r = Role::Other;
    if (is_lat_units(units) || sn == "latitude" || axis == "y" || n == "lat" || n == "latitude") r = Role::Lat;
    else if (is_lon_units(units) || sn == "longitude" || axis == "x" || n == "lon" || n == "longitude") r = Role::Lon;
    else if (lower(units).find(" since ") != std::string::npos || sn == "time" || axis == "t" || n == "time")
      r = Role::Time;
    else if (hpa_per_unit(units) > 0 || sn == "air_pressure" || axis == "z" || n == "level" || n == "lev" ||
             n == "plev" || n == "isobaricinhpa" || n == "pressure_level" || n == "pressure")
      r = Role::Level;
    else if (sn == "realization" || n == "number" || n == "member" || n == "ensemble" || n == "realization" ||
             n == "ens" || n == "ensemble_member")
      r = Role::Member;
    impl->roles.push_back(r);
  }
  auto dim_with = [&](Role r) -> int {
    int found = -1;
    for (std::size_t i = 0; i < impl->roles.size(); ++i)
      if (impl->roles[i] == r) {
        if (found >= 0)
          throw DataError(path + ": variable '" + info.variable + "' has two dimensions that look like the same axis (" +
                          dim_names[found] + ", " + dim_names[i] + ")");
        found = static_cast<int>(i);
      }
    return found;
  };
  int ilat = dim_with(Role::Lat), ilon = dim_with(Role::Lon), itime = dim_with(Role::Time),
      ilev = dim_with(Role::Level), imem = dim_with(Role::Member);
  if (ilat < 0 || ilon < 0)
    throw DataError(path + ": variable '" + info.variable + "' (dims " + join(dim_names) +
                    ") has no latitude/longitude dimensions (looked for units degrees_north/degrees_east)");
  impl->lat_before_lon = ilat < ilon;
  for (std::size_t i = 0; i < impl->roles.size(); ++i)
    if (impl->roles[i] == Role::Other && f.dim(impl->var.dims[i]).length != 1)
      throw DataError(path + ": variable '" + info.variable + "' has dimension '" + dim_names[i] + "' of length " +
                      std::to_string(f.dim(impl->var.dims[i]).length) +
                      " that isohypse does not understand (expected time, level, member, latitude, longitude)");

  auto coord = [&](int i, const char* what) -> std::vector<double> {
    nc::Dim d = f.dim(impl->var.dims[i]);
    auto cv = f.coordinate_var(d);
    if (!cv) throw DataError(path + ": dimension '" + d.name + "' (" + what + ") has no coordinate variable");
    return f.read_all(cv->id);
  };
  info.file_lat = arma::vec(coord(ilat, "latitude"));
  info.file_lon = arma::vec(coord(ilon, "longitude"));
  for (arma::uword i = 1; i < info.file_lat.n_elem; ++i)
    if ((info.file_lat(i) - info.file_lat(i - 1)) * (info.file_lat(1) - info.file_lat(0)) <= 0)
      throw DataError(path + ": latitudes are not monotonic");
  for (arma::uword i = 1; i < info.file_lon.n_elem; ++i)
    if (info.file_lon(i) <= info.file_lon(i - 1))
      throw DataError(path + ": longitudes are not increasing (at index " + std::to_string(i) + ")");

  // 4. Level.
  if (ilev >= 0) {
    nc::Dim d = f.dim(impl->var.dims[ilev]);
    auto cv = f.coordinate_var(d);
    std::vector<double> raw = cv ? f.read_all(cv->id) : std::vector<double>{};
    std::string units = cv ? f.text_att(cv->id, "units").value_or("") : "";
    double factor = hpa_per_unit(units);
    if (factor == 0) {
      if (raw.empty() && d.length == 1) factor = 1;  // single unnamed level
      else if (!raw.empty()) factor = *std::max_element(raw.begin(), raw.end()) > 2000 ? 0.01 : 1.0;
    }
    for (double x : raw) info.levels.push_back(x * factor);
    std::optional<std::size_t> pick;
    for (std::size_t i = 0; i < info.levels.size(); ++i)
      if (std::abs(info.levels[i] - level_hpa) < 0.01) pick = i;
    if (info.levels.empty() && d.length == 1) pick = 0;
    if (!pick) {
      std::vector<std::string> lv;
      for (double x : info.levels) lv.push_back(fmt(x));
      throw DataError(path + ": no " + fmt(level_hpa) + " hPa level in dimension '" + d.name + "' (levels: " +
                      join(lv) + " hPa)");
    }
    info.level_index = *pick;
    info.level_note = "level " + fmt(level_hpa) + " hPa from dimension '" + d.name + "'" +
                      (units.empty() ? "" : " (units " + units + ")");
  } else {
    std::optional<double> attr;
    for (const char* a : {"level", "lev", "plev", "pressure_level"})
      if (auto v = f.num_att(vid, a); v && !v->empty()) attr = (*v)[0];
    if (attr && std::abs(*attr - level_hpa) > 0.01 && std::abs(*attr * 0.01 - level_hpa) > 0.01)
      throw DataError(path + ": variable '" + info.variable + "' is at level " + fmt(*attr) + ", not " +
                      fmt(level_hpa) + " hPa");
    info.level_note = attr ? "single-level file (attribute lev = " + fmt(*attr) + ")"
                           : "single-level file (no level dimension or attribute; taken as " + fmt(level_hpa) + " hPa)";
  }

  // 5. Time and members.
  if (itime >= 0) {
    nc::Dim d = f.dim(impl->var.dims[itime]);
    info.time_dim = d.name;
    auto cv = f.coordinate_var(d);
    if (!cv) throw DataError(path + ": time dimension '" + d.name + "' has no coordinate variable");
    info.time_units = f.text_att(cv->id, "units").value_or("");
    try {
      info.calendar = parse_calendar(f.text_att(cv->id, "calendar").value_or("standard"));
      TimeUnits tu = parse_time_units(info.time_units, info.calendar);
      for (double v : f.read_all(cv->id)) info.times.push_back(decode_time(v, tu));
      if (auto rv = f.find_var("forecast_reference_time"); rv && rv->dims.empty()) {
        std::string ru = f.text_att(rv->id, "units").value_or(info.time_units);
        TimeUnits rtu = parse_time_units(ru, info.calendar);
        info.reference_time = decode_time(f.read_all(rv->id).at(0), rtu);
      }
    } catch (const Error& e) {
      throw DataError(path + ": time coordinate '" + d.name + "': " + e.what());
    }
  } else {
    throw DataError(path + ": variable '" + info.variable + "' (dims " + join(dim_names) +
                    ") has no time dimension (looked for a coordinate with units 'UNIT since DATE')");
  }
  if (imem >= 0) {
    nc::Dim d = f.dim(impl->var.dims[imem]);
    info.member_dim = d.name;
    info.members = d.length;
    if (auto cv = f.coordinate_var(d))
      for (double x : f.read_all(cv->id)) info.member_numbers.push_back(static_cast<int>(std::lround(x)));
  } else {
    for (const char* name : {"realization", "number", "member", "ensemble_member"}) {
      if (auto mv = f.find_var(name); mv && mv->dims.empty()) {
        info.member_number = static_cast<int>(f.read_all(mv->id).at(0));
        break;
      }
      if (auto a = f.num_att(NC_GLOBAL, name); a && !a->empty()) {
        info.member_number = static_cast<int>((*a)[0]);
        break;
      }
    }
  }
  return HeightDataset(std::move(impl));
}

DomainSelection HeightDataset::select(const std::optional<Domain>& domain) const {
  const DatasetInfo& info = impl_->info;
  DomainSelection sel;
  const arma::uword nlat = info.file_lat.n_elem, nlon = info.file_lon.n_elem;
  const double lat_step = nlat > 1 ? std::abs(info.file_lat(1) - info.file_lat(0)) : 1.0;
  const double lon_step = nlon > 1 ? (info.file_lon(nlon - 1) - info.file_lon(0)) / double(nlon - 1) : 1.0;
  const double eps = 1e-6;
  const double lat_lo_file = info.file_lat.min(), lat_hi_file = info.file_lat.max();

  Domain d = domain.value_or(Domain{lat_lo_file, lat_hi_file, info.file_lon(0),
                                    info.global_in_lon() ? info.file_lon(0) + 360.0 : info.file_lon(nlon - 1)});
  auto grid_desc = [&] {
    return "the grid covers latitudes " + fmt(lat_lo_file) + ".." + fmt(lat_hi_file) + " and longitudes " +
           fmt(info.file_lon(0)) + ".." + fmt(info.file_lon(nlon - 1)) + " (" + info.lon_convention() + ")";
  };
  if (lat_lo_file > d.lat_min + lat_step / 2 + eps || lat_hi_file < d.lat_max - lat_step / 2 - eps)
    throw InputError(info.path + ": the domain " + d.to_string() + " is not covered: " + grid_desc());

  // Latitudes inside [lat_min, lat_max], file index range.
  std::vector<arma::uword> lat_idx;
  for (arma::uword i = 0; i < nlat; ++i)
    if (info.file_lat(i) >= d.lat_min - eps && info.file_lat(i) <= d.lat_max + eps) lat_idx.push_back(i);
  if (lat_idx.empty()) throw InputError(info.path + ": no grid latitude inside the domain " + d.to_string());
  sel.lat_start = lat_idx.front();
  sel.lat_count = lat_idx.size();
  sel.grid.lat.set_size(lat_idx.size());
  for (std::size_t k = 0; k < lat_idx.size(); ++k) sel.grid.lat(k) = info.file_lat(lat_idx[k]);
  if (info.lat_descending()) sel.grid.lat = arma::flipud(sel.grid.lat);

  // Longitudes: eastward offset of each file longitude from lon_west.
  const double extent = domain ? d.lon_extent() : (info.global_in_lon() ? 360.0 : d.lon_east - d.lon_west);
  const bool full_circle = extent >= 360.0 - eps;
  std::vector<std::pair<double, arma::uword>> picked;
  for (arma::uword j = 0; j < nlon; ++j) {
    double off = std::fmod(info.file_lon(j) - d.lon_west, 360.0);
    if (off < -eps) off += 360.0;
    if (off < 0) off = 0;
    if (off > 360.0 - eps) off = 0;
    bool inside = full_circle ? off < 360.0 - eps : off <= extent + eps;
    if (inside) picked.emplace_back(off, j);
  }
  std::sort(picked.begin(), picked.end());
  bool covered = !picked.empty();
  if (covered && !info.global_in_lon()) {
    // A regional file: some 360-degree shift of its span must hold the domain.
    double a = info.file_lon(0), b = info.file_lon(nlon - 1);
    double shift = std::floor((d.lon_west + lon_step / 2 + eps - a) / 360.0) * 360.0;
    covered = a + shift <= d.lon_west + lon_step / 2 + eps && b + shift >= d.lon_west + extent - lon_step / 2 - eps;
  }
  if (!covered)
    throw InputError(info.path + ": the domain " + d.to_string() + " is not covered: " + grid_desc());
  sel.grid.lon.set_size(picked.size());
  for (std::size_t k = 0; k < picked.size(); ++k) {
    sel.grid.lon(k) = d.lon_west + picked[k].first;
    if (k == 0 || picked[k].second != picked[k - 1].second + 1)
      sel.lon_runs.push_back({picked[k].second, 1, k});
    else
      sel.lon_runs.back().count++;
  }
  return sel;
}

arma::fmat HeightDataset::read(const DomainSelection& sel, std::size_t t0, std::size_t count, std::size_t member) const {
  RawBlock raw;  // goes with the read: a reader may hold many files open
  read_raw(sel, t0, count, member, raw);
  arma::fmat out;
  unpack(raw, out);
  return out;
}

void HeightDataset::read_raw(const DomainSelection& sel, std::size_t t0, std::size_t count, std::size_t member,
                             RawBlock& raw) const {
  const Impl& im = *impl_;
  const DatasetInfo& info = im.info;
  if (t0 + count > info.times.size())
    throw InputError(info.path + ": time steps " + std::to_string(t0) + ".." + std::to_string(t0 + count) +
                     " asked but the file has " + std::to_string(info.times.size()));
  if (member >= info.members)
    throw InputError(info.path + ": member " + std::to_string(member) + " asked but the file has " +
                     std::to_string(info.members));
  raw.nlat = sel.lat_count;
  raw.nlon_out = sel.grid.lon.n_elem;
  raw.count = count;
  raw.lat_descending = info.lat_descending();
  raw.packing = info.packing;
  raw.to_metres = info.to_metres;
  raw.path = info.path;
  raw.boxes.clear();

  // What to ask netCDF-C for: each longitude run's box, or, when the domain
  // takes most of the file's horizontal plane, the whole plane at once and
  // the runs cut from it in memory. HDF5 reads a whole plane of a contiguous
  // variable straight into the buffer, but a box row by row through its
  // sieve buffer (one system call and one extra copy per 64 kB); the whole
  // plane is faster even with the extra points.
  struct Wanted {
    std::size_t lat0, nlat, lon0, nlon;
    std::vector<DomainSelection::Run> runs;  // starts relative to lon0
  };
  std::vector<Wanted> wanted;
  {
    const std::size_t plane = info.file_lat.n_elem * info.file_lon.n_elem;
    std::size_t points = 0;
    for (const auto& run : sel.lon_runs) points += sel.lat_count * run.count;
    if (2 * points >= plane) {
      wanted.push_back({0, info.file_lat.n_elem, 0, info.file_lon.n_elem, sel.lon_runs});
    } else {
      for (const auto& run : sel.lon_runs)
        wanted.push_back({sel.lat_start, sel.lat_count, run.start, run.count, {{0, run.count, run.out_offset}}});
    }
  }
  std::size_t total = 0;
  for (const Wanted& w : wanted) total += count * w.nlat * w.nlon;
  raw.values.resize(total);  // keeps its memory from read to read
  if (count == 0) return;

  std::size_t offset = 0;
  for (const Wanted& w : wanted) {
    std::vector<std::size_t> start, cnt;
    for (std::size_t i = 0; i < im.roles.size(); ++i) {
      switch (im.roles[i]) {
        case Role::Time: start.push_back(t0); cnt.push_back(count); break;
        case Role::Level: start.push_back(info.level_index); cnt.push_back(1); break;
        case Role::Lat: start.push_back(w.lat0); cnt.push_back(w.nlat); break;
        case Role::Lon: start.push_back(w.lon0); cnt.push_back(w.nlon); break;
        case Role::Member: start.push_back(member); cnt.push_back(1); break;
        case Role::Other: start.push_back(0); cnt.push_back(1); break;
      }
    }
    inflates_chunks();  // opens the chunk reader at the first read
    RawBlock::Box box;
    box.inflated = !(im.chunks && im.chunks->read(start, cnt, box.stored));
    if (box.inflated) im.file.read(im.var.id, start, cnt, raw.values.data() + offset);
    // In the buffer the time index is slowest (time precedes lat/lon in every
    // layout isohypse accepts except a trailing time, handled by strides).
    box.offset = offset;
    box.lat_skip = sel.lat_start - w.lat0;
    box.runs = w.runs;
    std::size_t stride = 1;
    for (std::size_t i = im.roles.size(); i-- > 0;) {
      if (im.roles[i] == Role::Time) box.s_time = stride;
      if (im.roles[i] == Role::Lat) box.s_lat = stride;
      if (im.roles[i] == Role::Lon) box.s_lon = stride;
      stride *= cnt[i];
    }
    offset += stride;
    raw.boxes.push_back(std::move(box));
  }
}

std::size_t unpack(RawBlock& raw, arma::fmat& out) {
  for (RawBlock::Box& box : raw.boxes)
    if (!box.inflated) {  // compressed chunks: inflated here, on the caller's thread
      detail::inflate_chunks(box.stored, raw.values.data() + box.offset, raw.path);
      box.inflated = true;
    }
  const std::size_t nlat = raw.nlat, nlon_out = raw.nlon_out, count = raw.count;
  out.set_size(nlat * nlon_out, count);  // every element is written below
  std::size_t n_missing = 0;
  if (count == 0) return n_missing;
  // Unpacking as one branch-free expression per value (it vectorises): a
  // missing code, a value outside the valid range or a non-finite value
  // becomes NaN. Absent codes are NaN, which never compares equal.
  const Packing& pk = raw.packing;
  constexpr float kInf = std::numeric_limits<float>::infinity();
  constexpr float kNaN = std::numeric_limits<float>::quiet_NaN();
  const float miss0 = pk.missing.size() > 0 ? static_cast<float>(pk.missing[0]) : kNaN;
  const float miss1 = pk.missing.size() > 1 ? static_cast<float>(pk.missing[1]) : kNaN;
  // Without a valid range, the finite floats: +-Inf and NaN fail either way.
  const float vmin = pk.valid_min ? static_cast<float>(*pk.valid_min) : std::numeric_limits<float>::lowest();
  const float vmax = pk.valid_max ? static_cast<float>(*pk.valid_max) : std::numeric_limits<float>::max();
  std::vector<float> more_codes;  // missing_value with more than two codes (rare): the slower loop
  for (std::size_t i = 2; i < pk.missing.size(); ++i) more_codes.push_back(static_cast<float>(pk.missing[i]));
  const double scale = pk.scale_factor * raw.to_metres, offset = pk.add_offset * raw.to_metres;
  auto is_bad = [=](float v) {  // bitwise, not short-circuit: no branches
    return static_cast<bool>(!(v >= vmin) | !(v <= vmax) | (v == miss0) | (v == miss1) | (std::abs(v) == kInf));
  };
  for (const RawBlock::Box& box : raw.boxes)
    for (const auto& run : box.runs)
      for (std::size_t t = 0; t < count; ++t) {
        float* col = out.colptr(t);
        for (std::size_t i = 0; i < nlat; ++i) {
          const std::size_t oi = raw.lat_descending ? nlat - 1 - i : i;
          const float* src =
              raw.values.data() + box.offset + t * box.s_time + (box.lat_skip + i) * box.s_lat + run.start * box.s_lon;
          float* dst = col + oi * nlon_out + run.out_offset;
          if (more_codes.empty() && box.s_lon == 1) {  // the usual case, vectorised
            unsigned bad_here = 0;  // a vectorised count beside the values
            for (std::size_t j = 0; j < run.count; ++j) {
              const float v = src[j];
              const bool bad = is_bad(v);
              bad_here += bad;
              dst[j] = bad ? kNaN : static_cast<float>(v * scale + offset);
            }
            n_missing += bad_here;
          } else {
            for (std::size_t j = 0; j < run.count; ++j) {
              const float v = src[j * box.s_lon];
              const bool bad = is_bad(v) || std::find(more_codes.begin(), more_codes.end(), v) != more_codes.end();
              n_missing += bad;
              dst[j] = bad ? kNaN : static_cast<float>(v * scale + offset);
            }
          }
        }
      }
  return n_missing;
}

bool HeightDataset::inflates_chunks() const {
  const Impl& im = *impl_;
  if (!im.chunks_tried) {
    im.chunks_tried = true;
    if (im.info.format.rfind("NetCDF-4", 0) == 0) {
      std::vector<std::size_t> lengths;
      for (int d : im.var.dims) lengths.push_back(im.file.dim(d).length);
      im.chunks = detail::ChunkReader::open(im.info.path, im.var.name, lengths);
    }
  }
  return im.chunks != nullptr;
}

std::size_t HeightDataset::count_missing() const {
  DomainSelection all = select(std::nullopt);
  std::size_t n = 0;
  RawBlock raw;  // both buffers serve every chunk
  arma::fmat v;
  const std::size_t nt = impl_->info.times.size();
  const std::size_t chunk = std::max<std::size_t>(1, (1u << 22) / std::max<arma::uword>(1, all.grid.n_points()));
  for (std::size_t m = 0; m < impl_->info.members; ++m)
    for (std::size_t t = 0; t < nt; t += chunk) {
      read_raw(all, t, std::min(chunk, nt - t), m, raw);
      n += unpack(raw, v);
    }
  return n;
}

}  // namespace isohypse
