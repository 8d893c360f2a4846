#include "isohypse/io/dataset.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "io/dataset_axes.hpp"
#include "io/hdf5_chunks.hpp"
#include "io/height_variable.hpp"
#include "io/metadata_text.hpp"
#include "io/netcdf_file.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

using detail::number_text;
using detail::Role;

std::string DatasetInfo::lon_convention() const {
  if (file_lon.n_elem == 0) return "none";
  double lo = file_lon.min(), hi = file_lon.max();
  if (!global_in_lon()) return "regional " + number_text(lo) + ".." + number_text(hi);
  if (lo < 0) return "-180..180";
  return "0..360";
}

bool DatasetInfo::global_in_lon() const {
  if (file_lon.n_elem < 2) return false;
  const double step = axis_step(file_lon);
  const double span = std::abs(file_lon(file_lon.n_elem - 1) - file_lon(0));
  return span + step >= 360.0 - 1e-3 * step;
}

struct HeightDataset::Impl {
  nc::File file;
  DatasetInfo info;
  nc::Var var;
  std::vector<Role> roles;  // per dimension of var
  // Compressed NetCDF-4 variables: their chunks read directly (see hdf5_chunks.hpp).
  mutable std::unique_ptr<detail::ChunkReader> chunks;
  mutable bool chunks_tried = false;

  explicit Impl(nc::File f) : file(std::move(f)) {}
};

std::vector<HeightCandidate> list_height_candidates(const std::string& path) {
  return detail::find_candidates(nc::File::open(path));
}

HeightDataset::HeightDataset(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
HeightDataset::HeightDataset(HeightDataset&&) noexcept = default;
HeightDataset& HeightDataset::operator=(HeightDataset&&) noexcept = default;
HeightDataset::~HeightDataset() = default;
const DatasetInfo& HeightDataset::info() const { return impl_->info; }

HeightDataset HeightDataset::open(const std::string& path, const std::string& variable, double level_hpa) {
  auto impl = std::make_unique<Impl>(nc::File::open(path));
  const nc::File& f = impl->file;
  DatasetInfo& info = impl->info;
  info.path = path;
  info.level_hpa = level_hpa;
  info.format = f.format_name();
  info.candidates = detail::find_candidates(f);
  impl->var = detail::choose_height_variable(f, info, variable);
  detail::read_height_units(f, impl->var, info);
  info.packing = detail::read_packing(f, impl->var);
  impl->roles = detail::dimension_roles(f, impl->var);
  const detail::LeadLayout lead = detail::settle_lead_axis(f, impl->var, impl->roles, info);
  const detail::AxisPositions at = detail::axis_positions(f, impl->var, impl->roles, info);
  detail::read_horizontal_axes(f, impl->var, at, info);
  detail::choose_level(f, impl->var, at, level_hpa, info);
  detail::read_time_axis(f, impl->var, at, lead, info);
  detail::read_member_axis(f, impl->var, at, info);
  return HeightDataset(std::move(impl));
}

DomainSelection HeightDataset::select(const std::optional<Domain>& domain) const {
  return select_domain(impl_->info, domain);
}

DomainSelection select_domain(const DatasetInfo& info, const std::optional<Domain>& domain) {
  DomainSelection sel;
  const arma::uword nlat = info.file_lat.n_elem, nlon = info.file_lon.n_elem;
  // Half a grid step of tolerance at the domain's edges (1 degree for a
  // single row or column).
  const double lat_step = nlat > 1 ? axis_step(info.file_lat) : 1.0;
  const double lon_step = nlon > 1 ? axis_step(info.file_lon) : 1.0;
  const double eps = 1e-6;
  const double lat_lo_file = info.file_lat.min(), lat_hi_file = info.file_lat.max();

  Domain d = domain.value_or(Domain{lat_lo_file, lat_hi_file, info.file_lon(0),
                                    info.global_in_lon() ? info.file_lon(0) + 360.0 : info.file_lon(nlon - 1)});
  auto grid_desc = [&] {
    return "the grid covers latitudes " + number_text(lat_lo_file) + ".." + number_text(lat_hi_file) + " and longitudes " +
           number_text(info.file_lon(0)) + ".." + number_text(info.file_lon(nlon - 1)) + " (" + info.lon_convention() + ")";
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

namespace {

// A box of the file's horizontal plane to read, with the domain's longitude
// runs inside it.
struct Wanted {
  std::size_t lat0, nlat, lon0, nlon;
  std::vector<DomainSelection::Run> runs;  // starts relative to lon0
};

// What to ask netCDF-C for: each longitude run's box, or, when the domain
// takes most of the file's horizontal plane, the whole plane at once and the
// runs cut from it in memory. HDF5 reads a whole plane of a contiguous
// variable straight into the buffer, but a box row by row through its sieve
// buffer (one system call and one extra copy per 64 kB); the whole plane is
// faster even with the extra points.
std::vector<Wanted> boxes_to_read(const DatasetInfo& info, const DomainSelection& sel) {
  const std::size_t plane = info.file_lat.n_elem * info.file_lon.n_elem;
  std::size_t points = 0;
  for (const auto& run : sel.lon_runs) points += sel.lat_count * run.count;
  if (2 * points >= plane) return {{0, info.file_lat.n_elem, 0, info.file_lon.n_elem, sel.lon_runs}};
  std::vector<Wanted> wanted;
  for (const auto& run : sel.lon_runs)
    wanted.push_back({sel.lat_start, sel.lat_count, run.start, run.count, {{0, run.count, run.out_offset}}});
  return wanted;
}

// The hyperslab (start and count per dimension of the variable) of box `w`
// for steps [t0, t0 + count) of `member` of initialisation `init` at the chosen level.
void hyperslab(const std::vector<Role>& roles, const Wanted& w, std::size_t level_index, std::size_t t0,
               std::size_t count, std::size_t member, std::size_t init, std::vector<std::size_t>& start,
               std::vector<std::size_t>& cnt) {
  start.clear();
  cnt.clear();
  for (Role r : roles) {
    switch (r) {
      case Role::Time: start.push_back(t0); cnt.push_back(count); break;
      case Role::Level: start.push_back(level_index); cnt.push_back(1); break;
      case Role::Lat: start.push_back(w.lat0); cnt.push_back(w.nlat); break;
      case Role::Lon: start.push_back(w.lon0); cnt.push_back(w.nlon); break;
      case Role::Member: start.push_back(member); cnt.push_back(1); break;
      case Role::Init: start.push_back(init); cnt.push_back(1); break;
      case Role::Lead:  // settle_lead_axis made the lead the time axis
      case Role::Other: start.push_back(0); cnt.push_back(1); break;
    }
  }
}

// Sets the box's strides from the hyperslab's shape; returns its size. In
// the buffer the time index is slowest (time precedes lat/lon in every
// layout isohypse accepts except a trailing time, handled by the strides).
std::size_t set_strides(const std::vector<Role>& roles, const std::vector<std::size_t>& cnt, RawBlock::Box& box) {
  std::size_t stride = 1;
  for (std::size_t i = roles.size(); i-- > 0;) {
    if (roles[i] == Role::Time) box.s_time = stride;
    if (roles[i] == Role::Lat) box.s_lat = stride;
    if (roles[i] == Role::Lon) box.s_lon = stride;
    stride *= cnt[i];
  }
  return stride;
}

}  // namespace

void HeightDataset::read_raw(const DomainSelection& sel, std::size_t t0, std::size_t count, std::size_t member,
                             RawBlock& raw, std::size_t init) const {
  const Impl& im = *impl_;
  const DatasetInfo& info = im.info;
  // The callers (the readers of this library) ask only for steps and members
  // the file has: anything else is a bug.
  if (t0 + count > info.times.size())
    throw InternalError(info.path + ": time steps " + std::to_string(t0) + ".." + std::to_string(t0 + count) +
                        " asked but the file has " + std::to_string(info.times.size()));
  if (init >= std::max<std::size_t>(1, info.init_times.size()))
    throw InternalError(info.path + ": initialisation " + std::to_string(init) + " asked but the file has " +
                        std::to_string(info.init_times.size()));
  if (member >= info.members)
    throw InternalError(info.path + ": member " + std::to_string(member) + " asked but the file has " +
                        std::to_string(info.members));
  raw.nlat = sel.lat_count;
  raw.nlon_out = sel.grid.lon.n_elem;
  raw.count = count;
  raw.lat_descending = info.lat_descending();
  raw.packing = info.packing;
  raw.to_metres = info.to_metres;
  raw.level_hpa = info.level_hpa;
  raw.path = info.path;
  raw.boxes.clear();
  const std::vector<Wanted> wanted = boxes_to_read(info, sel);
  std::size_t total = 0;
  for (const Wanted& w : wanted) total += count * w.nlat * w.nlon;
  raw.values.resize(total);  // keeps its memory from read to read
  if (count == 0) return;

  std::size_t offset = 0;
  std::vector<std::size_t> start, cnt;
  for (const Wanted& w : wanted) {
    hyperslab(im.roles, w, info.level_index, t0, count, member, init, start, cnt);
    inflates_chunks();  // opens the chunk reader at the first read
    RawBlock::Box box;
    box.inflated = !(im.chunks && im.chunks->read(start, cnt, box.stored));
    if (box.inflated) im.file.read(im.var.id, start, cnt, raw.values.data() + offset);
    box.offset = offset;
    box.lat_skip = sel.lat_start - w.lat0;
    box.runs = w.runs;
    offset += set_strides(im.roles, cnt, box);
    raw.boxes.push_back(std::move(box));
  }
}

HeightRange plausible_heights(double level_hpa) {
  constexpr double kT0 = 288.15, kLapse = 0.0065, kP0 = 1013.25, kExponent = 0.190263;  // ICAO troposphere
  constexpr double kTropopauseHpa = 226.32, kScaleHeight = 6341.62;                    // R T / g at 216.65 K
  const double z = level_hpa >= kTropopauseHpa
                       ? kT0 / kLapse * (1.0 - std::pow(level_hpa / kP0, kExponent))
                       : 11000.0 + kScaleHeight * std::log(kTropopauseHpa / level_hpa);
  return {z - std::max(600.0, 0.28 * std::abs(z)), z + std::max(600.0, 0.17 * std::abs(z))};
}

namespace {

// Unpacking (see unpack) in one branch-free expression per value, so that it
// vectorises: a missing code, a value outside the valid range or a
// non-finite value is missing; a value outside [lo, hi] metres implausible.
// Both become NaN and are counted apart. Absent codes are NaN, which never
// compares equal.
class Unpacker {
public:
  Unpacker(const RawBlock& raw, float lo, float hi) : lo_(lo), hi_(hi) {
    const Packing& pk = raw.packing;
    miss0_ = pk.missing.size() > 0 ? static_cast<float>(pk.missing[0]) : kNaN;
    miss1_ = pk.missing.size() > 1 ? static_cast<float>(pk.missing[1]) : kNaN;
    // Without a valid range, the finite floats: +-Inf and NaN fail either way.
    vmin_ = pk.valid_min ? static_cast<float>(*pk.valid_min) : std::numeric_limits<float>::lowest();
    vmax_ = pk.valid_max ? static_cast<float>(*pk.valid_max) : std::numeric_limits<float>::max();
    for (std::size_t i = 2; i < pk.missing.size(); ++i) more_codes_.push_back(static_cast<float>(pk.missing[i]));
    scale_ = pk.scale_factor * raw.to_metres;
    offset_ = pk.add_offset * raw.to_metres;
  }
  bool has_more_codes() const { return !more_codes_.empty(); }
  bool missing(float v) const {  // bitwise, not short-circuit: no branches
    return static_cast<bool>(!(v >= vmin_) | !(v <= vmax_) | (v == miss0_) | (v == miss1_) |
                             (std::abs(v) == kInf));
  }
  bool missing_code(float v) const {
    return missing(v) || std::find(more_codes_.begin(), more_codes_.end(), v) != more_codes_.end();
  }
  float metres(float v) const { return static_cast<float>(v * scale_ + offset_); }
  bool implausible(float y) const { return static_cast<bool>((y < lo_) | (y > hi_)); }

  // One run of n values (stride s) into dst, counting into missing_ and implausible_.
  void run(const float* src, std::size_t n, std::size_t s, float* dst) {
    if (more_codes_.empty() && s == 1) {  // the usual case, vectorised
      unsigned missing_here = 0, implausible_here = 0;  // vectorised counts beside the values
      for (std::size_t j = 0; j < n; ++j) {
        const float v = src[j], y = metres(v);
        const bool bad = missing(v), odd = !bad & implausible(y);
        missing_here += bad;
        implausible_here += odd;
        dst[j] = (bad | odd) ? kNaN : y;
      }
      missing_ += missing_here;
      implausible_ += implausible_here;
      return;
    }
    for (std::size_t j = 0; j < n; ++j) {
      const float v = src[j * s], y = metres(v);
      const bool bad = missing_code(v), odd = !bad && implausible(y);
      missing_ += bad;
      implausible_ += odd;
      dst[j] = (bad || odd) ? kNaN : y;
    }
  }
  std::size_t missing_count() const { return missing_; }
  std::size_t implausible_count() const { return implausible_; }

private:
  static constexpr float kInf = std::numeric_limits<float>::infinity();
  static constexpr float kNaN = std::numeric_limits<float>::quiet_NaN();
  float lo_, hi_, miss0_, miss1_, vmin_, vmax_;
  std::vector<float> more_codes_;  // missing_value with more than two codes (rare): the slower loop
  double scale_, offset_;
  std::size_t missing_ = 0, implausible_ = 0;
};

// The refusal of a block with more than 1 % implausible values, with the
// range of those values (looked for again: the rare path).
[[noreturn]] void refuse_implausible(const RawBlock& raw, const Unpacker& u, const HeightRange& r,
                                     std::size_t n_values) {
  float found_lo = std::numeric_limits<float>::max(), found_hi = std::numeric_limits<float>::lowest();
  for (float v : raw.values) {
    const float y = u.metres(v);
    if (u.missing_code(v) || !u.implausible(y)) continue;
    found_lo = std::min(found_lo, y);
    found_hi = std::max(found_hi, y);
  }
  throw DataError(raw.path + ": " + std::to_string(u.implausible_count()) + " of " + std::to_string(n_values) +
                  " values read lie outside the plausible heights of " + number_text(raw.level_hpa) + " hPa (" +
                  number_text(std::round(r.lo)) + " to " + number_text(std::round(r.hi)) + " m; found " +
                  number_text(found_lo) + " to " + number_text(found_hi) +
                  " m): wrong units (geopotential given as metres?), another level or a damaged file");
}

}  // namespace

std::size_t unpack(RawBlock& raw, arma::fmat& out) {
  for (RawBlock::Box& box : raw.boxes)
    if (!box.inflated) {  // compressed chunks: inflated here, on the caller's thread
      detail::inflate_chunks(box.stored, raw.values.data() + box.offset, raw.path);
      box.inflated = true;
    }
  const std::size_t nlat = raw.nlat, nlon_out = raw.nlon_out, count = raw.count;
  out.set_size(nlat * nlon_out, count);  // every element is written below
  if (count == 0) return 0;
  const bool check = !std::isnan(raw.level_hpa);
  const HeightRange r = check ? plausible_heights(raw.level_hpa) : HeightRange{0.0, 0.0};
  constexpr float kInf = std::numeric_limits<float>::infinity();
  Unpacker u(raw, check ? static_cast<float>(r.lo) : -kInf, check ? static_cast<float>(r.hi) : kInf);
  for (const RawBlock::Box& box : raw.boxes)
    for (const auto& run : box.runs)
      for (std::size_t t = 0; t < count; ++t) {
        float* col = out.colptr(t);
        for (std::size_t i = 0; i < nlat; ++i) {
          const std::size_t oi = raw.lat_descending ? nlat - 1 - i : i;
          const float* src =
              raw.values.data() + box.offset + t * box.s_time + (box.lat_skip + i) * box.s_lat + run.start * box.s_lon;
          u.run(src, run.count, box.s_lon, col + oi * nlon_out + run.out_offset);
        }
      }
  if (static_cast<double>(u.implausible_count()) > 0.01 * static_cast<double>(out.n_elem))
    refuse_implausible(raw, u, r, out.n_elem);
  return u.missing_count() + u.implausible_count();
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
