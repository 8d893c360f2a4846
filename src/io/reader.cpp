#include "isohypse/io/reader.hpp"

#include <glob.h>

#include <algorithm>
#include <cmath>
#include <functional>
#include <map>
#include <set>

#include "isohypse/io/dataset.hpp"
#include "isohypse/base/error.hpp"

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

struct Step {
  std::size_t file;
  std::size_t index;
};

}  // namespace

Field read_heights(const std::vector<std::string>& paths, const ReadOptions& opt, ReadReport* report,
                   const std::function<void(std::size_t, std::size_t)>& progress) {
  if (paths.empty()) throw InputError("no input files given");
  ReadReport rep;
  std::vector<HeightDataset> sets;
  std::vector<DomainSelection> sels;
  sets.reserve(paths.size());
  for (const std::string& p : paths) {
    sets.push_back(HeightDataset::open(p, opt.variable, opt.level_hpa));
    sels.push_back(sets.back().select(opt.domain));
    const DatasetInfo& a = sets.front().info();
    const DatasetInfo& b = sets.back().info();
    if (b.members > 1)
      throw DataError(p + ": has " + std::to_string(b.members) + " ensemble members (dimension '" + b.member_dim +
                      "'); a reanalysis or analysis record has one");
    if (b.calendar != a.calendar)
      throw DataError(p + ": calendar " + calendar_name(b.calendar) + " differs from " + calendar_name(a.calendar) +
                      " in " + a.path);
    if (!sels.back().grid.same_as(sels.front().grid))
      throw DataError(p + ": its grid over the domain (" + std::to_string(sels.back().grid.n_lat()) + " x " +
                      std::to_string(sels.back().grid.n_lon()) + ") differs from that of " + a.path + " (" +
                      std::to_string(sels.front().grid.n_lat()) + " x " + std::to_string(sels.front().grid.n_lon()) +
                      ")");
  }
  rep.files = paths;
  rep.calendar = sets.front().info().calendar;

  // Order every step by day; group sub-daily steps per day.
  std::map<std::int64_t, std::vector<Step>> by_day;
  std::map<std::int64_t, std::set<double>> seconds_seen;
  std::int64_t from = opt.from ? day_number(Date{opt.from->year, opt.from->month, opt.from->day, rep.calendar})
                               : std::numeric_limits<std::int64_t>::min();
  std::int64_t to = opt.to ? day_number(Date{opt.to->year, opt.to->month, opt.to->day, rep.calendar})
                           : std::numeric_limits<std::int64_t>::max();
  std::set<std::int64_t> duplicate_days;
  for (std::size_t f = 0; f < sets.size(); ++f) {
    const auto& times = sets[f].info().times;
    for (std::size_t i = 0; i < times.size(); ++i) {
      std::int64_t dn = day_number(times[i].date);
      if (dn < from || dn > to) continue;
      if (!seconds_seen[dn].insert(times[i].seconds_of_day).second) {
        duplicate_days.insert(dn);
        continue;  // the first occurrence is kept
      }
      by_day[dn].push_back({f, i});
    }
  }
  if (by_day.empty())
    throw DataError(paths.front() + (paths.size() > 1 ? " (and " + std::to_string(paths.size() - 1) + " more)" : "") +
                    ": no time steps" + (opt.from || opt.to ? " in the period asked" : ""));
  for (auto dn : duplicate_days) rep.duplicates.push_back(from_day_number(dn, rep.calendar));

  std::size_t max_per_day = 0;
  for (const auto& [dn, steps] : by_day) max_per_day = std::max(max_per_day, steps.size());
  rep.steps_per_day = static_cast<int>(max_per_day);
  if (max_per_day > 1 && !opt.daily_means) {
    const auto& [dn, steps] = *std::max_element(by_day.begin(), by_day.end(),
                                                [](auto& a, auto& b) { return a.second.size() < b.second.size(); });
    throw DataError(sets[steps.front().file].info().path + ": " + std::to_string(max_per_day) +
                    " time steps on " + to_string(from_day_number(dn, rep.calendar)) +
                    "; the data are sub-daily: ask for daily means (--daily-mean)");
  }
  // Gaps between the first and last day.
  std::int64_t prev = by_day.begin()->first;
  for (const auto& [dn, steps] : by_day) {
    if (dn > prev + 1) {
      rep.gaps.emplace_back(from_day_number(prev + 1, rep.calendar), from_day_number(dn - 1, rep.calendar));
      rep.missing_days += static_cast<std::size_t>(dn - prev - 1);
    }
    prev = dn;
  }

  Field field;
  field.grid = sels.front().grid;
  field.variable = sets.front().info().variable;
  field.sources = paths;
  field.values.set_size(field.grid.n_points(), by_day.size());
  field.dates.reserve(by_day.size());
  std::vector<std::size_t> column_of_day;

  // Read file by file in time chunks (contiguous index runs), then place.
  std::map<std::pair<std::size_t, std::size_t>, std::size_t> column_of_step;
  std::size_t col = 0;
  for (const auto& [dn, steps] : by_day) {
    field.dates.push_back(from_day_number(dn, rep.calendar));
    for (const Step& s : steps) column_of_step[{s.file, s.index}] = col;
    ++col;
  }
  arma::fmat sums;
  arma::Mat<unsigned short> counts;
  const bool averaging = max_per_day > 1;
  if (averaging) {
    sums.zeros(field.grid.n_points(), by_day.size());
    counts.zeros(field.grid.n_points(), by_day.size());
  } else {
    field.values.fill(arma::datum::nan);
  }

  const std::size_t chunk = std::max<std::size_t>(1, (std::size_t(1) << 23) / std::max<arma::uword>(1, field.grid.n_points()));
  for (std::size_t f = 0; f < sets.size(); ++f) {
    const std::size_t nt = sets[f].info().times.size();
    for (std::size_t t0 = 0; t0 < nt; t0 += chunk) {
      std::size_t n = std::min(chunk, nt - t0);
      // Skip chunks with no wanted step.
      bool wanted = false;
      for (std::size_t i = t0; i < t0 + n && !wanted; ++i) wanted = column_of_step.count({f, i}) > 0;
      if (!wanted) continue;
      arma::fmat block = sets[f].read(sels[f], t0, n);
      for (std::size_t i = 0; i < n; ++i) {
        auto it = column_of_step.find({f, t0 + i});
        if (it == column_of_step.end()) continue;
        if (!averaging) {
          field.values.col(it->second) = block.col(i);
        } else {
          const float* src = block.colptr(i);
          float* dst = sums.colptr(it->second);
          unsigned short* cnt = counts.colptr(it->second);
          for (arma::uword p = 0; p < block.n_rows; ++p)
            if (!std::isnan(src[p])) {
              dst[p] += src[p];
              cnt[p]++;
            }
        }
      }
    }
    if (progress) progress(f + 1, sets.size());
  }
  if (averaging) {
    for (arma::uword c = 0; c < sums.n_cols; ++c)
      for (arma::uword p = 0; p < sums.n_rows; ++p)
        field.values(p, c) = counts(p, c) ? sums(p, c) / counts(p, c) : arma::datum::nan;
  }
  sums.reset();
  rep.missing_values = static_cast<std::size_t>(arma::accu(field.values != field.values));
  if (rep.missing_values == field.values.n_elem)
    throw DataError(paths.front() + ": every value over the domain " +
                    (opt.domain ? opt.domain->to_string() : std::string("(whole grid)")) + " is missing");
  if (report) *report = std::move(rep);
  return field;
}

}  // namespace isohypse
