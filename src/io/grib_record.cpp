#include "io/grib_record.hpp"

#include <algorithm>
#include <numeric>
#include <set>

#include "io/grib_forecast.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse::detail {

namespace {

// GRIB dates are on the proleptic Gregorian calendar (WMO FM 92: the
// reference time is a Gregorian date, with no Julian switch).
Instant gregorian(const Instant& t) {
  return {Date{t.date.year, t.date.month, t.date.day, Calendar::ProlepticGregorian}, t.seconds_of_day};
}

// Keeps only the messages of shortName `variable`; DataError naming the file
// when none is left.
void keep_variable(GribIndex& index, const std::string& variable, const std::string& path) {
  std::set<std::string> found;
  for (const GribMessage& m : index.messages) found.insert(m.short_name);
  std::erase_if(index.messages, [&](const GribMessage& m) { return m.short_name != variable; });
  if (index.messages.empty()) {
    std::string names;
    for (const std::string& s : found) names += (names.empty() ? "" : ", ") + s;
    throw DataError(path + ": no GRIB message of variable (shortName) '" + variable + "'; the file has " + names);
  }
}

}  // namespace

GribRecordFile GribRecordFile::open(const std::string& path, const std::string& variable, double level_hpa) {
  GribRecordFile f;
  GribScanOptions scan;
  scan.level_hpa = level_hpa;
  f.index_ = scan_grib_heights({path}, scan);
  if (!variable.empty()) keep_variable(f.index_, variable, path);
  f.info_ = grib_dataset_info(f.index_);
  f.info_.calendar = Calendar::ProlepticGregorian;
  f.info_.time_units = "GRIB dataDate, dataTime and step (valid time = initialisation + lead)";
  std::vector<Instant> valid;
  std::set<long> members;
  for (const GribMessage& m : f.index_.messages) {
    valid.push_back(gregorian(add_duration(m.init, m.lead_hours, 3600.0)));
    members.insert(m.member);
  }
  f.info_.members = members.size();
  f.info_.member_dim = "perturbationNumber";
  f.info_.member_numbers.assign(members.begin(), members.end());
  auto key = [&](std::size_t i) { return std::make_pair(day_number(valid[i].date), valid[i].seconds_of_day); };
  f.by_time_.resize(valid.size());
  std::iota(f.by_time_.begin(), f.by_time_.end(), std::size_t{0});
  std::stable_sort(f.by_time_.begin(), f.by_time_.end(), [&](std::size_t a, std::size_t b) { return key(a) < key(b); });
  for (std::size_t i : f.by_time_) f.info_.times.push_back(valid[i]);
  return f;
}

arma::fmat GribRecordFile::read(const DomainSelection& sel, std::size_t t0, std::size_t count) const {
  if (t0 + count > by_time_.size())
    throw InternalError(info_.path + ": GRIB time steps " + std::to_string(t0) + ".." + std::to_string(t0 + count) +
                        " asked for, the file has " + std::to_string(by_time_.size()));
  const std::vector<std::size_t> steps(by_time_.begin() + static_cast<std::ptrdiff_t>(t0),
                                       by_time_.begin() + static_cast<std::ptrdiff_t>(t0 + count));
  RawBlock raw;
  GribDecodeScratch scratch;
  read_grib_member(index_, steps, sel, raw, scratch);
  arma::fmat out;
  unpack(raw, out);
  return out;
}

}  // namespace isohypse::detail
