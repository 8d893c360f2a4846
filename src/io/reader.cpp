#include "isohypse/io/reader.hpp"

#include <glob.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <functional>
#include <limits>
#include <map>
#include <set>
#include <variant>

#include "io/grib_forecast.hpp"
#include "io/grib_record.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/dataset.hpp"

namespace isohypse {

std::vector<std::string> expand_paths(const std::vector<std::string>& patterns) {
  std::vector<std::string> out;
  std::set<std::string> seen;
  for (const std::string& p : patterns) {
    if (p.find_first_of("*?[") == std::string::npos) {
      if (seen.insert(p).second) out.push_back(p);
      continue;
    }
    glob_t g{};
    int rc = ::glob(p.c_str(), 0, nullptr, &g);
    if (rc == GLOB_NOMATCH || (rc == 0 && g.gl_pathc == 0)) {
      globfree(&g);
      throw InputError(p + ": no file matches this pattern");
    }
    if (rc != 0) {
      globfree(&g);
      throw InputError(p + ": cannot expand this pattern");
    }
    std::vector<std::string> found(g.gl_pathv, g.gl_pathv + g.gl_pathc);
    globfree(&g);
    std::sort(found.begin(), found.end());
    for (auto& f : found)
      if (seen.insert(f).second) out.push_back(f);
  }
  return out;
}

namespace {

// One file of a record: NetCDF (HeightDataset) or GRIB (GribRecordFile),
// seen through the same three calls.
class RecordFile {
public:
  explicit RecordFile(HeightDataset ds) : file_(std::move(ds)) {}
  explicit RecordFile(detail::GribRecordFile g) : file_(std::move(g)) {}
  const DatasetInfo& info() const {
    return std::visit([](const auto& f) -> const DatasetInfo& { return f.info(); }, file_);
  }
  DomainSelection select(const std::optional<Domain>& domain) const {
    return std::visit([&](const auto& f) { return f.select(domain); }, file_);
  }
  arma::fmat read(const DomainSelection& sel, std::size_t t0, std::size_t count) const {
    return std::visit([&](const auto& f) { return f.read(sel, t0, count); }, file_);
  }

private:
  std::variant<HeightDataset, detail::GribRecordFile> file_;
};

// Whether the record is GRIB (every file starts with "GRIB") or NetCDF (none
// does); a mixed record is refused, naming one file of each kind. A missing
// file counts as neither: its reader says so by name.
bool record_is_grib(const std::vector<std::string>& paths) {
  std::vector<std::string> grib, other;
  for (const std::string& p : paths) {
    std::error_code ec;
    if (!std::filesystem::is_regular_file(p, ec)) continue;
    (detail::is_grib_file(p) ? grib : other).push_back(p);
  }
  if (!grib.empty() && !other.empty())
    throw InputError(grib.front() + " is GRIB but " + other.front() +
                     " is not: a record is read from GRIB files only or from NetCDF files only (" +
                     std::to_string(grib.size()) + " GRIB, " + std::to_string(other.size()) + " other)");
  return !grib.empty();
}

// The open files of a record and each one's selection of the domain.
struct OpenFiles {
  std::vector<RecordFile> sets;
  std::vector<DomainSelection> sels;
};

// One time step of one file.
struct Step {
  std::size_t file;
  std::size_t index;
};

// The steps kept, grouped by day number (days ascending; within a day in the
// order met), and the days that had a time step more than once.
struct DayIndex {
  std::map<std::int64_t, std::vector<Step>> by_day;
  std::set<std::int64_t> duplicate_days;
};

// Opens every file and checks it against the first: one member, the same
// calendar, the same grid over the domain.
OpenFiles open_files(const std::vector<std::string>& paths, const ReadOptions& opt) {
  OpenFiles of;
  of.sets.reserve(paths.size());
  const bool grib = record_is_grib(paths);
  for (const std::string& p : paths) {
    if (grib) of.sets.emplace_back(detail::GribRecordFile::open(p, opt.variable, opt.level_hpa));
    else of.sets.emplace_back(HeightDataset::open(p, opt.variable, opt.level_hpa));
    of.sels.push_back(of.sets.back().select(opt.domain));
    const DatasetInfo& a = of.sets.front().info();
    const DatasetInfo& b = of.sets.back().info();
    const Grid& ga = of.sels.front().grid;
    const Grid& gb = of.sels.back().grid;
    if (b.members > 1)
      throw DataError(p + ": has " + std::to_string(b.members) + " ensemble members (dimension '" + b.member_dim +
                      "'); a reanalysis or analysis record has one");
    if (b.calendar != a.calendar)
      throw DataError(p + ": calendar " + calendar_name(b.calendar) + " differs from " + calendar_name(a.calendar) +
                      " in " + a.path);
    if (!gb.same_as(ga))
      throw DataError(p + ": its grid over the domain (" + std::to_string(gb.n_lat()) + " x " +
                      std::to_string(gb.n_lon()) + ") differs from that of " + a.path + " (" +
                      std::to_string(ga.n_lat()) + " x " + std::to_string(ga.n_lon()) + ")");
  }
  return of;
}

// Every step of every file within [from, to], ordered by day; a step at a
// day and time of day already seen is a duplicate (the first is kept).
DayIndex order_by_day(const std::vector<RecordFile>& sets, const ReadOptions& opt, Calendar calendar) {
  auto day_of = [calendar](const Date& d) { return day_number(Date{d.year, d.month, d.day, calendar}); };
  const std::int64_t from = opt.from ? day_of(*opt.from) : std::numeric_limits<std::int64_t>::min();
  const std::int64_t to = opt.to ? day_of(*opt.to) : std::numeric_limits<std::int64_t>::max();
  DayIndex days;
  std::map<std::int64_t, std::set<double>> seconds_seen;
  for (std::size_t f = 0; f < sets.size(); ++f) {
    const auto& times = sets[f].info().times;
    for (std::size_t i = 0; i < times.size(); ++i) {
      const std::int64_t dn = day_number(times[i].date);
      if (dn < from || dn > to) continue;
      if (!seconds_seen[dn].insert(times[i].seconds_of_day).second) {
        days.duplicate_days.insert(dn);
        continue;
      }
      days.by_day[dn].push_back({f, i});
    }
  }
  return days;
}

// The most time steps any day has; more than one needs daily means
// (DataError naming the file and the day otherwise).
std::size_t steps_per_day(const DayIndex& days, const std::vector<RecordFile>& sets, bool daily_means,
                          Calendar calendar) {
  std::size_t most = 0;
  for (const auto& [dn, steps] : days.by_day) most = std::max(most, steps.size());
  if (most > 1 && !daily_means) {
    const auto& [dn, steps] = *std::max_element(days.by_day.begin(), days.by_day.end(),
                                                [](auto& a, auto& b) { return a.second.size() < b.second.size(); });
    throw DataError(sets[steps.front().file].info().path + ": " + std::to_string(most) + " time steps on " +
                    to_string(from_day_number(dn, calendar)) +
                    "; the data are sub-daily: ask for daily means (--daily-mean)");
  }
  return most;
}

// The gaps between the first and the last day, and the days they miss.
void report_gaps(const DayIndex& days, ReadReport& rep) {
  std::int64_t prev = days.by_day.begin()->first;
  for (const auto& [dn, steps] : days.by_day) {
    if (dn > prev + 1) {
      rep.gaps.emplace_back(from_day_number(prev + 1, rep.calendar), from_day_number(dn - 1, rep.calendar));
      rep.missing_days += static_cast<std::size_t>(dn - prev - 1);
    }
    prev = dn;
  }
}

// The sum and count of the valid values of each day's steps (daily means).
struct DailySums {
  arma::fmat sums;
  arma::Mat<unsigned short> counts;

  void add(const float* src, arma::uword n, arma::uword column) {
    float* dst = sums.colptr(column);
    unsigned short* cnt = counts.colptr(column);
    for (arma::uword p = 0; p < n; ++p)
      if (!std::isnan(src[p])) {
        dst[p] += src[p];
        cnt[p]++;
      }
  }
  // The means into `values`; NaN where no step had a value.
  void means_into(arma::fmat& values) const {
    for (arma::uword c = 0; c < sums.n_cols; ++c)
      for (arma::uword p = 0; p < sums.n_rows; ++p)
        values(p, c) = counts(p, c) ? sums(p, c) / counts(p, c) : arma::datum::nan;
  }
};

// Reads file by file in time chunks (contiguous index runs; a chunk with no
// wanted step is skipped) and places each step in its day's column, or adds
// it to the day's sums when averaging.
void join_record(const OpenFiles& of, const std::map<std::pair<std::size_t, std::size_t>, std::size_t>& column_of_step,
                 bool averaging, Field& field, const std::function<void(std::size_t, std::size_t)>& progress) {
  DailySums daily;
  if (averaging) {
    daily.sums.zeros(field.values.n_rows, field.values.n_cols);
    daily.counts.zeros(field.values.n_rows, field.values.n_cols);
  } else {
    field.values.fill(arma::datum::nan);
  }
  const std::size_t chunk =
      std::max<std::size_t>(1, (std::size_t(1) << 23) / std::max<arma::uword>(1, field.grid.n_points()));
  for (std::size_t f = 0; f < of.sets.size(); ++f) {
    const std::size_t nt = of.sets[f].info().times.size();
    for (std::size_t t0 = 0; t0 < nt; t0 += chunk) {
      const std::size_t n = std::min(chunk, nt - t0);
      bool wanted = false;
      for (std::size_t i = t0; i < t0 + n && !wanted; ++i) wanted = column_of_step.count({f, i}) > 0;
      if (!wanted) continue;
      const arma::fmat block = of.sets[f].read(of.sels[f], t0, n);
      for (std::size_t i = 0; i < n; ++i) {
        auto it = column_of_step.find({f, t0 + i});
        if (it == column_of_step.end()) continue;
        if (averaging) daily.add(block.colptr(i), block.n_rows, it->second);
        else field.values.col(it->second) = block.col(i);
      }
    }
    if (progress) progress(f + 1, of.sets.size());
  }
  if (averaging) daily.means_into(field.values);
}

// The field's dates and grid, and the column of every kept step.
Field record_layout(const OpenFiles& of, const std::vector<std::string>& paths, const DayIndex& days, Calendar calendar,
                    std::map<std::pair<std::size_t, std::size_t>, std::size_t>& column_of_step) {
  Field field;
  field.grid = of.sels.front().grid;
  field.variable = of.sets.front().info().variable;
  field.sources = paths;
  field.values.set_size(field.grid.n_points(), days.by_day.size());
  field.dates.reserve(days.by_day.size());
  std::size_t col = 0;
  for (const auto& [dn, steps] : days.by_day) {
    field.dates.push_back(from_day_number(dn, calendar));
    for (const Step& s : steps) column_of_step[{s.file, s.index}] = col;
    ++col;
  }
  return field;
}

}  // namespace

Field read_heights(const std::vector<std::string>& paths, const ReadOptions& opt, ReadReport* report,
                   const std::function<void(std::size_t, std::size_t)>& progress) {
  if (paths.empty()) throw InputError("no input files given");
  const OpenFiles of = open_files(paths, opt);
  ReadReport rep;
  rep.files = paths;
  rep.calendar = of.sets.front().info().calendar;
  const DayIndex days = order_by_day(of.sets, opt, rep.calendar);
  if (days.by_day.empty())
    throw DataError(paths.front() + (paths.size() > 1 ? " (and " + std::to_string(paths.size() - 1) + " more)" : "") +
                    ": no time steps" + (opt.from || opt.to ? " in the period asked" : ""));
  for (auto dn : days.duplicate_days) rep.duplicates.push_back(from_day_number(dn, rep.calendar));
  const std::size_t most = steps_per_day(days, of.sets, opt.daily_means, rep.calendar);
  rep.steps_per_day = static_cast<int>(most);
  report_gaps(days, rep);

  std::map<std::pair<std::size_t, std::size_t>, std::size_t> column_of_step;
  Field field = record_layout(of, paths, days, rep.calendar, column_of_step);
  join_record(of, column_of_step, most > 1, field, progress);
  rep.missing_values = static_cast<std::size_t>(arma::accu(field.values != field.values));
  if (rep.missing_values == field.values.n_elem)
    throw DataError(paths.front() + ": every value over the domain " +
                    (opt.domain ? opt.domain->to_string() : std::string("(whole grid)")) + " is missing");
  if (report) *report = std::move(rep);
  return field;
}

}  // namespace isohypse
