#include "isohypse/io/forecast.hpp"

#include "io/grib_forecast.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <map>
#include <set>

#include "isohypse/io/dataset.hpp"
#include "io/grib_forecast.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

// The regime domain widened by one native grid step on every side, so that
// bilinear interpolation has neighbours at the edges.
Domain widened(const Domain& d, double lat_step, double lon_step) {
  Domain w = d;
  w.lat_min = std::max(-90.0, d.lat_min - lat_step);
  w.lat_max = std::min(90.0, d.lat_max + lat_step);
  if (d.lon_extent() + 2 * lon_step < 360.0) {
    w.lon_west = d.lon_west - lon_step;
    w.lon_east = d.lon_west + d.lon_extent() + lon_step;
  }
  return w;
}

DomainSelection select_for(const DatasetInfo& in, const Domain& domain, const Grid* target, Domain& used) {
  if (target) {  // the file has exactly the target's points: read just them, no interpolation
    try {
      DomainSelection exact = select_domain(in, domain);
      if (exact.grid.same_as(*target)) {
        used = domain;
        return exact;
      }
    } catch (const InputError&) {
      // not covered: the widened attempt below gives the message
    }
  }
  Domain wide = widened(domain, axis_step(in.file_lat), axis_step(in.file_lon));
  try {
    used = wide;
    return select_domain(in, wide);
  } catch (const InputError&) {
    used = domain;
    return select_domain(in, domain);  // throws the coverage message if even this fails
  }
}

std::string list_leads(const std::vector<int>& leads) {
  std::string s;
  for (std::size_t i = 0; i < leads.size() && i < 12; ++i) s += (i ? ", " : "") + std::to_string(leads[i]);
  if (leads.size() > 12) s += ", ...";
  return s;
}

// Sub-daily steps are averaged to daily means of the valid date (UTC days,
// the file's calendar). A day needs as many steps as the fullest day of the
// file: the last lead day may fall short (a forecast that ends at 00 UTC of
// its last date) and is then left out; a day short of steps before it is
// refused, naming the day and its steps.
void keep_complete_days(const std::string& path, const std::vector<Instant>& times,
                        std::map<int, std::vector<std::size_t>>& steps) {
  std::size_t full = 0;
  for (const auto& [lead, idx] : steps) full = std::max(full, idx.size());
  if (full <= 1) return;
  if (steps.size() > 1 && steps.rbegin()->second.size() < full) steps.erase(std::prev(steps.end()));
  for (const auto& [lead, idx] : steps)
    if (idx.size() < full)
      throw DataError(path + ": lead day " + std::to_string(lead) + " (" + to_string(times[idx.front()].date) +
                      ") has " + std::to_string(idx.size()) + " of the " + std::to_string(full) +
                      " sub-daily steps its other days have: its daily mean would be biased towards the hours "
                      "present");
}

// Lead day -> the indices of an initialisation's steps on that day.
std::map<int, std::vector<std::size_t>> lead_days(const std::string& p, const Date& init,
                                                  const std::vector<Instant>& times) {
  std::map<int, std::vector<std::size_t>> steps;
  for (std::size_t i = 0; i < times.size(); ++i) {
    std::int64_t lead = days_between(init, times[i].date);
    if (lead < 0)
      throw DataError(p + ": time step " + std::to_string(i) + " (" + to_string(times[i].date) +
                      ") is before the initialisation " + to_string(init));
    steps[static_cast<int>(lead)].push_back(i);
  }
  keep_complete_days(p, times, steps);
  std::vector<int> missing;
  const int n_leads = steps.rbegin()->first + 1;
  for (int l = 0; l < n_leads; ++l)
    if (!steps.count(l)) missing.push_back(l);
  if (!missing.empty())
    throw DataError(p + ": lead days missing: " + list_leads(missing) + " (of 0.." + std::to_string(n_leads - 1) + ")");
  return steps;
}

struct Scan {
  std::map<std::int64_t, Initialisation> by_init;
  std::map<std::int64_t, std::set<int>> numbers;
  std::optional<Calendar> calendar;
  std::string first_path;
  Grid first_grid;
};

// The members of initialisation `init_index` of file p (its valid times
// `times`) added to the scan.
void add_file_initialisation(Scan& scan, const std::string& p, const DatasetInfo& in, const Date& init,
                             const std::vector<Instant>& times, std::size_t init_index, const DomainSelection& sel,
                             const Domain& used) {
  const std::map<int, std::vector<std::size_t>> steps = lead_days(p, init, times);
  const int n_leads = steps.rbegin()->first + 1;
  const std::int64_t key = day_number(init);
  Initialisation& it = scan.by_init[key];
  if (it.files.empty()) {
    it.init = init;
    it.init_real = to_real_calendar(init);
    it.n_leads = n_leads;
    it.native_grid = sel.grid;
    it.read_domain = used;
    it.lead_steps.clear();
    for (auto& [l, idx] : steps) it.lead_steps.push_back(idx);
  } else if (it.n_leads != n_leads) {
    throw DataError(p + ": " + std::to_string(n_leads) + " lead days, but " + it.files.front() + " of the same " +
                    "initialisation has " + std::to_string(it.n_leads));
  }
  const std::size_t file_index = it.files.size();
  it.files.push_back(p);
  std::vector<int> file_numbers;
  if (!in.member_dim.empty()) {
    // The member coordinate's own numbers when it has them (1..50 stay 1..50).
    if (in.member_numbers.size() == in.members) file_numbers = in.member_numbers;
    else
      for (std::size_t m = 0; m < in.members; ++m) file_numbers.push_back(static_cast<int>(it.members.size() + m));
  } else {
    file_numbers.push_back(in.member_number.value_or(static_cast<int>(it.members.size())));
  }
  for (std::size_t m = 0; m < file_numbers.size(); ++m) {
    if (!scan.numbers[key].insert(file_numbers[m]).second)
      throw DataError(p + ": member " + std::to_string(file_numbers[m]) + " of the initialisation " + to_string(init) +
                      " appears twice (duplicate member)");
    it.members.push_back({file_index, in.member_dim.empty() ? 0 : m, file_numbers[m], init_index});
  }
}

// Every GRIB file's messages, grouped into initialisations and added to the scan.
void add_grib_files(Scan& scan, const std::vector<std::string>& paths, const Domain& domain, const Grid* target) {
  auto index = std::make_shared<const GribIndex>(scan_grib_heights(paths));
  const DatasetInfo info = detail::grib_dataset_info(*index);
  if (scan.calendar && *scan.calendar != info.calendar)
    throw DataError(info.path + ": GRIB's proleptic Gregorian calendar differs from " +
                    calendar_name(*scan.calendar) + " in " + scan.first_path);
  Domain used;
  const DomainSelection sel = select_for(info, domain, target, used);
  if (!scan.calendar) {
    scan.calendar = info.calendar;
    scan.first_path = info.path;
    scan.first_grid = sel.grid;
  } else if (!sel.grid.same_as(scan.first_grid)) {
    throw DataError(info.path + ": its grid differs from that of " + scan.first_path);
  }
  for (detail::GribInitialisation& gi : detail::grib_initialisations(*index)) {
    const Date init = gi.init.date;
    const std::map<int, std::vector<std::size_t>> steps = lead_days(info.path, init, gi.valid);
    const std::int64_t key = day_number(init);
    Initialisation& it = scan.by_init[key];
    if (!it.files.empty())
      throw DataError(info.path + ": the initialisation " + to_string(init) +
                      " is in GRIB and in NetCDF files (" + it.files.front() + "): give it once");
    it.init = init;
    it.init_real = to_real_calendar(init);
    it.n_leads = steps.rbegin()->first + 1;
    it.native_grid = sel.grid;
    it.read_domain = used;
    for (const auto& [l, idx] : steps) it.lead_steps.push_back(idx);
    std::set<std::string> files;
    for (const auto& member_steps : gi.steps)
      for (std::size_t i : member_steps) files.insert(index->messages[i].path);
    it.files.assign(files.begin(), files.end());
    it.grib = index;
    it.grib_steps = std::move(gi.steps);
    for (std::size_t m = 0; m < gi.members.size(); ++m) {
      it.members.push_back({0, m, static_cast<int>(gi.members[m]), 0});
      scan.numbers[key].insert(static_cast<int>(gi.members[m]));
    }
  }
}

}  // namespace

std::vector<Initialisation> scan_forecasts(const std::vector<std::string>& paths, const std::string& variable,
                                           const Domain& domain, const Grid* target) {
  if (paths.empty()) throw InputError("no forecast files given");
  Scan scan;
  std::vector<std::string> grib;
  for (const std::string& p : paths) {
    if (detail::is_grib_file(p)) {
      grib.push_back(p);
      continue;
    }
    HeightDataset ds = HeightDataset::open(p, variable);
    const DatasetInfo& in = ds.info();
    if (in.times.empty()) throw DataError(p + ": no time steps");
    if (scan.calendar && *scan.calendar != in.calendar)
      throw DataError(p + ": calendar " + calendar_name(in.calendar) + " differs from " +
                      calendar_name(*scan.calendar) + " in " + scan.first_path);
    Domain used;
    DomainSelection sel = select_for(in, domain, target, used);
    if (!scan.calendar) {
      scan.calendar = in.calendar;
      scan.first_path = p;
      scan.first_grid = sel.grid;
    } else if (!sel.grid.same_as(scan.first_grid)) {
      throw DataError(p + ": its grid (" + std::to_string(sel.grid.n_lat()) + " x " + std::to_string(sel.grid.n_lon()) +
                      " points over the domain) differs from that of " + scan.first_path + " (" +
                      std::to_string(scan.first_grid.n_lat()) + " x " + std::to_string(scan.first_grid.n_lon()) + ")");
    }
    if (in.init_times.empty()) {
      const Date init = in.reference_time ? in.reference_time->date : in.times.front().date;
      add_file_initialisation(scan, p, in, init, in.times, 0, sel, used);
    } else {  // several initialisations (or hindcast dates) in the file
      for (std::size_t k = 0; k < in.init_times.size(); ++k)
        add_file_initialisation(scan, p, in, in.init_times[k].date, in.valid_by_init[k], k, sel, used);
    }
  }
  if (!grib.empty()) add_grib_files(scan, grib, domain, target);
  auto& by_init = scan.by_init;
  std::vector<Initialisation> out;
  for (auto& [k, v] : by_init) out.push_back(std::move(v));
  return out;
}

Regridder::Regridder(const Grid& from, const Grid& to, const std::string& what) {
  identity_ = from.same_as(to);
  if (identity_) return;
  const arma::uword nt = to.n_points();
  for (auto& i : idx_) i.set_size(nt);
  for (auto& w : w_) w.set_size(nt);
  const double eps = 1e-6;
  auto bracket = [&](const arma::vec& axis, double x, arma::uword& i0, double& frac) {
    if (axis.n_elem == 1) {
      if (std::abs(axis(0) - x) > eps) return false;
      i0 = 0;
      frac = 0;
      return true;
    }
    if (x < axis(0) - eps || x > axis(axis.n_elem - 1) + eps) return false;
    arma::uword hi = static_cast<arma::uword>(std::upper_bound(axis.begin(), axis.end(), x) - axis.begin());
    hi = std::clamp<arma::uword>(hi, 1, axis.n_elem - 1);
    i0 = hi - 1;
    frac = std::clamp((x - axis(i0)) / (axis(hi) - axis(i0)), 0.0, 1.0);
    return true;
  };
  for (arma::uword a = 0; a < to.n_lat(); ++a) {
    arma::uword i0 = 0;
    double fy = 0;
    if (!bracket(from.lat, to.lat(a), i0, fy))
      throw InputError(what + ": the grid (latitudes " + std::to_string(from.lat.min()) + ".." +
                       std::to_string(from.lat.max()) + ") does not cover the regime grid's latitude " +
                       std::to_string(to.lat(a)));
    for (arma::uword b = 0; b < to.n_lon(); ++b) {
      // Target longitude shifted by whole turns into the source's range.
      double x = to.lon(b);
      while (x < from.lon(0) - eps) x += 360.0;
      while (x > from.lon(from.n_lon() - 1) + eps && x - 360.0 >= from.lon(0) - eps) x -= 360.0;
      arma::uword j0 = 0;
      double fx = 0;
      if (!bracket(from.lon, x, j0, fx))
        throw InputError(what + ": the grid (longitudes " + std::to_string(from.lon.min()) + ".." +
                         std::to_string(from.lon.max()) + ") does not cover the regime grid's longitude " +
                         std::to_string(to.lon(b)));
      const arma::uword i1 = std::min<arma::uword>(i0 + 1, from.n_lat() - 1);
      const arma::uword j1 = std::min<arma::uword>(j0 + 1, from.n_lon() - 1);
      const arma::uword t = a * to.n_lon() + b;
      idx_[0](t) = i0 * from.n_lon() + j0;
      idx_[1](t) = i0 * from.n_lon() + j1;
      idx_[2](t) = i1 * from.n_lon() + j0;
      idx_[3](t) = i1 * from.n_lon() + j1;
      w_[0](t) = static_cast<float>((1 - fy) * (1 - fx));
      w_[1](t) = static_cast<float>((1 - fy) * fx);
      w_[2](t) = static_cast<float>(fy * (1 - fx));
      w_[3](t) = static_cast<float>(fy * fx);
    }
  }
  pick_ = arma::all(w_[0] == 1.0f);  // every target point is a source node: a plain gather
}

arma::fmat Regridder::apply(const arma::fmat& v) const {
  arma::fmat out;
  apply_into(v, out);
  return out;
}

void Regridder::apply_into(const arma::fmat& v, arma::fmat& out) const {
  if (identity_) {
    out = v;
    return;
  }
  out.set_size(idx_[0].n_elem, v.n_cols);
  for (arma::uword c = 0; c < v.n_cols; ++c) {
    const float* src = v.colptr(c);
    float* dst = out.colptr(c);
    const arma::uword* i0 = idx_[0].memptr();
    if (pick_) {
      for (arma::uword t = 0; t < out.n_rows; ++t) dst[t] = src[i0[t]];
      continue;
    }
    const arma::uword *i1 = idx_[1].memptr(), *i2 = idx_[2].memptr(), *i3 = idx_[3].memptr();
    const float *w0 = w_[0].memptr(), *w1 = w_[1].memptr(), *w2 = w_[2].memptr(), *w3 = w_[3].memptr();
    for (arma::uword t = 0; t < out.n_rows; ++t)
      dst[t] = w0[t] * src[i0[t]] + w1[t] * src[i1[t]] + w2[t] * src[i2[t]] + w3[t] * src[i3[t]];
  }
}

struct EnsembleReader::OpenFile {
  HeightDataset ds;
  DomainSelection sel;
};

EnsembleReader::EnsembleReader(std::vector<const Initialisation*> inits, const Regridder& to_target,
                               std::string variable)
    : inits_(std::move(inits)), to_target_(to_target), variable_(std::move(variable)) {
  grib_selection_.resize(inits_.size());
  for (std::size_t i = 0; i < inits_.size(); ++i) {
    const Initialisation& in = *inits_[i];
    if (in.grib) grib_selection_[i] = select_domain(detail::grib_dataset_info(*in.grib), in.read_domain);
    for (std::size_t f = 0; f < in.files.size(); ++f)
      for (std::size_t m = 0; m < in.members.size(); ++m)
        if (in.members[m].file == f) {
          slots_.push_back({i, m});
          ++reads_left_[in.files[f]];
        }
    bool one = true;  // one step per lead day, in order (the usual daily file)
    for (int l = 0; one && l < in.n_leads; ++l)
      one = in.lead_steps[static_cast<std::size_t>(l)] == std::vector<std::size_t>{static_cast<std::size_t>(l)};
    one_step_per_day_.push_back(one);
  }
}

EnsembleReader::~EnsembleReader() = default;

void EnsembleReader::read(std::size_t k, RawBlock& raw) {
  const Slot& s = slots_.at(k);
  const Initialisation& in = *inits_[s.init];
  const MemberSource& ms = in.members[s.member];
  if (in.grib) {  // decoded here, on the calling thread (ecCodes is thread-safe as built: see DEVELOPERS.md)
    thread_local GribDecodeScratch scratch;
    detail::read_grib_member(*in.grib, in.grib_steps.at(ms.index), grib_selection_[s.init], raw, scratch);
    return;
  }
  const std::string& path = in.files[ms.file];
  auto it = open_.find(path);
  if (it == open_.end()) {
    auto f = std::make_unique<OpenFile>(OpenFile{HeightDataset::open(path, variable_), {}});
    f->sel = f->ds.select(in.read_domain);
    it = open_.emplace(path, std::move(f)).first;
  }
  const HeightDataset& ds = it->second->ds;
  ds.read_raw(it->second->sel, 0, ds.info().times.size(), ms.index, raw, ms.init_index);
  if (--reads_left_[path] == 0) open_.erase(it);  // the file's last member: close it
}

void EnsembleReader::finish(std::size_t k, Work& work) const {
  const Slot& s = slots_.at(k);
  const Initialisation& in = *inits_[s.init];
  const bool one_per_day = one_step_per_day_[s.init] && work.raw.count == static_cast<std::size_t>(in.n_leads);
  const bool identity = to_target_.identity();
  // Each step writes into the next buffer; the last one is work.heights.
  arma::fmat& unpacked = (one_per_day && identity) ? work.heights : work.unpacked;
  const bool complete = unpack(work.raw, unpacked) == 0;
  const arma::fmat* current = &unpacked;
  if (!one_per_day) {
    arma::fmat& daily = identity ? work.heights : work.daily;
    daily.set_size(unpacked.n_rows, static_cast<arma::uword>(in.n_leads));
    for (int l = 0; l < in.n_leads; ++l) {
      const auto& steps = in.lead_steps[static_cast<std::size_t>(l)];
      daily.col(l) = unpacked.col(steps.front());
      for (std::size_t i = 1; i < steps.size(); ++i) daily.col(l) += unpacked.col(steps[i]);
      daily.col(l) /= static_cast<float>(steps.size());
    }
    current = &daily;
  }
  if (!identity) to_target_.apply_into(*current, work.heights);
  for (int l = 0; !complete && l < in.n_leads; ++l)  // which lead day (the margin may hold the gap)
    if (!work.heights.col(l).is_finite()) {
      const MemberSource& ms = in.members[s.member];
      throw DataError(in.files[ms.file] + ": member " + std::to_string(ms.number) + " has missing values on lead day " +
                      std::to_string(l) + " (" + to_string(in.valid_model(l)) + ")");
    }
}

void EnsembleReader::fetch(std::size_t k, std::mutex& netcdf, Work& work, Times* times) {
  using Clock = std::chrono::steady_clock;
  Clock::time_point t0;
  if (inits_[slots_.at(k).init]->grib) {  // ecCodes decodes on several threads (its own locks): no netCDF lock
    t0 = Clock::now();
    read(k, work.raw);
    if (times) times->read_s += std::chrono::duration<double>(Clock::now() - t0).count();
  } else {
    std::lock_guard<std::mutex> lock(netcdf);
    t0 = Clock::now();  // reading proper, not the wait for the lock
    read(k, work.raw);
    if (times) times->read_s += std::chrono::duration<double>(Clock::now() - t0).count();
  }
  t0 = Clock::now();
  finish(k, work);
  if (times) times->finish_s += std::chrono::duration<double>(Clock::now() - t0).count();
}

void for_each_member(const Initialisation& init, const Regridder& to_target, const std::string& variable,
                     const std::function<void(std::size_t, arma::fmat&)>& use) {
  EnsembleReader reader({&init}, to_target, variable);
  EnsembleReader::Work work;  // one set of buffers for every member
  for (std::size_t k = 0; k < reader.size(); ++k) {
    reader.read(k, work.raw);
    reader.finish(k, work);
    use(reader.slot(k).member, work.heights);
  }
}

std::vector<arma::fmat> read_members(const Initialisation& init, const Regridder& to_target,
                                     const std::string& variable) {
  std::vector<arma::fmat> out(init.members.size());
  for_each_member(init, to_target, variable, [&](std::size_t m, arma::fmat& h) { out[m].swap(h); });
  return out;
}

}  // namespace isohypse
