#include "isohypse/io/grib_index.hpp"

#include <eccodes.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <map>
#include <memory>
#include <optional>
#include <sstream>
#include <tuple>

#include "io/grib_grid.hpp"
#include "io/grib_handle.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

constexpr long kParamGeopotential = 129;
constexpr long kParamGeopotentialHeight = 156;

struct FileCloser {
  void operator()(std::FILE* f) const {
    if (f) std::fclose(f);
  }
};
using FilePtr = std::unique_ptr<std::FILE, FileCloser>;

std::string fmt_number(double v) {
  std::ostringstream s;
  s << v;
  return s.str();
}

// dataDate YYYYMMDD and dataTime HHMM as an instant. GRIB dates are on the
// proleptic Gregorian calendar; isohypse's standard calendar agrees with it
// from 1582-10-15 on, and earlier dates are refused rather than misread.
Instant init_instant(const grib::Handle& h) {
  const long date = h.get_long("dataDate"), time = h.get_long("dataTime");
  const int y = static_cast<int>(date / 10000), m = static_cast<int>(date / 100 % 100),
            d = static_cast<int>(date % 100);
  if (!is_valid_date(y, m, d, Calendar::Standard) || Date{y, m, d} < Date{1582, 10, 15})
    throw DataError(h.where() + ": dataDate " + std::to_string(date) +
                    " is not a Gregorian date isohypse reads (from 1582-10-15)");
  const long hh = time / 100, mm = time % 100;
  if (time < 0 || hh > 23 || mm > 59)
    throw DataError(h.where() + ": dataTime " + std::to_string(time) + " is not a time HHMM");
  return Instant{make_date(y, m, d, Calendar::Standard), static_cast<double>(hh * 3600 + mm * 60)};
}

// The level in hPa of an isobaric message; nullopt for any other level type.
std::optional<double> isobaric_hpa(const grib::Handle& h, const std::string& type_of_level) {
  if (type_of_level == "isobaricInhPa") return h.get_double("level");
  if (type_of_level == "isobaricInPa") return h.get_double("level") / 100.0;
  return std::nullopt;
}

long member_number(const grib::Handle& h) {
  if (!h.defined("number")) return 0;
  long n = 0;
  // A missing number (all bits set) is an unperturbed field.
  if (codes_get_long(h.get(), "number", &n) != 0 || n < 0 || n == GRIB_MISSING_LONG) return 0;
  return n;
}

// shortName and units of a parameter, looked up once per (edition, centre,
// paramId). ecCodes evaluates paramId, shortName and units as three concepts
// over the same parameter tables (definitions/grib*/paramId.def, shortName.def,
// units.def and their localConcepts: one entry each, with the same
// conditions), so a paramId names one shortName and units. Each evaluation
// costs 0.17-0.31 ms of CPU (ecCodes 2.28, two runs on the project machine), and the
// three were most of the scan (bench/README.md, "classify from
// GRIB"). An unknown parameter (paramId 0) is looked up every time.
class ParameterNames {
public:
  const std::pair<std::string, std::string>& of(const grib::Handle& h, long edition, long param_id) {
    const auto key = std::make_tuple(edition, h.defined("centre") ? h.get_long("centre") : -1L, param_id);
    auto it = names_.find(key);
    if (it != names_.end() && param_id != 0) return it->second;
    auto names = std::make_pair(h.get_string("shortName"), h.get_string("units"));
    return names_.insert_or_assign(key, std::move(names)).first->second;
  }

private:
  std::map<std::tuple<long, long, long>, std::pair<std::string, std::string>> names_;
};

// z (129) or gh (156) straight from the codes the message carries, for an
// instantaneous field: GRIB 2 discipline 0, category 3, number 4 or 5 (WMO
// code table 4.2) with product definition template 4.0 or 4.1; GRIB 1
// parameter 6 or 7 of WMO table 2 (versions 1-3) or 129 or 156 of
// ECMWF's table 128, with time range indicator 0, 1 or 10. ecCodes' paramId
// gives the same for these (checked for several centres with python3-eccodes),
// but evaluates it as a concept over every parameter table, 0.17 ms a
// message; everything else (time means among them) is left to paramId.
std::optional<long> height_param_from_codes(const grib::Handle& h, long edition) {
  auto pick = [](long code, long z, long gh) -> std::optional<long> {
    if (code == z) return kParamGeopotential;
    if (code == gh) return kParamGeopotentialHeight;
    return std::nullopt;
  };
  if (edition == 2) {
    if (h.get_long("discipline") != 0 || h.get_long("parameterCategory") != 3) return std::nullopt;
    const long pdt = h.get_long("productDefinitionTemplateNumber");
    if (pdt != 0 && pdt != 1) return std::nullopt;
    return pick(h.get_long("parameterNumber"), 4, 5);
  }
  if (edition != 1) return std::nullopt;
  const long range = h.get_long("timeRangeIndicator");
  if (range != 0 && range != 1 && range != 10) return std::nullopt;
  const long table = h.get_long("table2Version"), code = h.get_long("indicatorOfParameter");
  if (table >= 1 && table <= 3) return pick(code, 6, 7);
  if (table == 128) return pick(code, 129, 156);
  return std::nullopt;
}

// Simple packing without a bitmap: what grib_decode needs to unpack the
// values itself (GribMessage::SimplePacking); nullopt otherwise.
std::optional<GribMessage::SimplePacking> simple_packing(const grib::Handle& h, const GribMessage& m) {
  if (m.packing != "grid_simple" || m.bits_per_value < 0 || m.bits_per_value > 32) return std::nullopt;
  if (h.defined("bitmapPresent") && h.get_long("bitmapPresent") != 0) return std::nullopt;
  GribMessage::SimplePacking p;
  p.reference = h.get_double("referenceValue");
  p.binary_scale = h.get_long("binaryScaleFactor");
  p.decimal_scale = h.get_long("decimalScaleFactor");
  p.data_offset = static_cast<std::uint64_t>(h.get_long("offsetBeforeData"));
  p.values = static_cast<std::uint64_t>(h.get_long("numberOfValues"));
  const std::uint64_t bytes = (p.values * static_cast<std::uint64_t>(m.bits_per_value) + 7) / 8;
  if (p.data_offset + bytes + 4 > m.length) return std::nullopt;  // let ecCodes judge such a message
  return p;
}

// Everything the index keeps about one message, its parameter and level
// read first so that other messages are skipped cheaply.
GribMessage describe_message(const grib::Handle& h, const std::string& path, std::uint64_t offset,
                             ParameterNames& names) {
  GribMessage m;
  m.path = path;
  m.offset = offset;
  m.length = static_cast<std::uint64_t>(h.get_long("totalLength"));
  m.edition = h.get_long("edition");
  m.param_id = height_param_from_codes(h, m.edition).value_or(0);
  if (m.param_id == 0) m.param_id = h.get_long("paramId");
  std::tie(m.short_name, m.units) = names.of(h, m.edition, m.param_id);
  m.type_of_level = h.get_string("typeOfLevel");
  return m;
}

void describe_field(const grib::Handle& h, GribMessage& m) {
  m.member = member_number(h);
  m.data_type = h.defined("dataType") ? h.get_string("dataType") : std::string();
  m.init = init_instant(h);
  m.lead_hours = step_to_hours(h.get_long("endStep"), h.get_long("stepUnits"), h.where());
  m.packing = h.get_string("packingType");
  m.bits_per_value = h.defined("bitsPerValue") ? h.get_long("bitsPerValue") : 0;
  m.simple = simple_packing(h, m);
}

// What one file held besides the messages kept, for the refusal message.
struct FileTally {
  std::map<std::string, int> other_parameters;  // "t (paramId 130)" -> count
  std::map<double, int> height_levels;          // hPa -> count, every isobaric height
  std::map<std::string, int> other_level_types;
  int kept = 0;
};

std::string join_counts(const std::map<std::string, int>& counts) {
  std::string s;
  for (const auto& [name, n] : counts) s += (s.empty() ? "" : ", ") + name + " x " + std::to_string(n);
  return s;
}

[[noreturn]] void refuse_file(const std::string& path, const FileTally& t, const GribScanOptions& o) {
  if (t.height_levels.empty() && t.other_level_types.empty()) {
    std::string found = t.other_parameters.empty() ? "no GRIB message at all" : join_counts(t.other_parameters);
    throw DataError(path + ": no geopotential (z, paramId 129) or geopotential height (gh, paramId 156) "
                    "message; the file holds " + found);
  }
  std::string levels;
  for (const auto& [hpa, n] : t.height_levels) levels += (levels.empty() ? "" : ", ") + fmt_number(hpa);
  if (!t.other_level_types.empty())
    levels += (levels.empty() ? "" : "; ") + std::string("other level types: ") + join_counts(t.other_level_types);
  throw DataError(path + ": no geopotential or geopotential height message at " +
                  fmt_number(o.level_hpa.value_or(0)) + " hPa; height levels found: " +
                  (levels.empty() ? "none" : levels + " hPa"));
}

// Grid of a kept message: refused unless regular; the first one sets the
// index's grid, every later one must equal it.
void check_grid(const grib::Handle& h, GribIndex& index, std::string& first_where, grib::GridCache& cache) {
  const GribGrid& g = cache.grid_of(h);
  if (first_where.empty()) {
    index.grid = g;
    first_where = h.where();
    return;
  }
  // GRIB 1 stores coordinates in millidegrees, GRIB 2 in microdegrees: one
  // grid written in both editions agrees to a millidegree.
  if (!g.same_as(index.grid, 1.5e-3))
    throw DataError(h.where() + ": grid " + g.describe() + " differs from " + index.grid.describe() + " of " +
                    first_where + "; isohypse reads one grid: interpolate the files to one grid first");
}

// A truncated last message: ecCodes stops at it (or reports a premature
// end); either way bytes from a "GRIB" on remain unread at the end.
void check_file_end(const std::string& path, std::FILE* f, std::uint64_t end_of_last, int err) {
  const auto size = static_cast<std::uint64_t>(std::filesystem::file_size(path));
  bool grib_after = false;
  if (end_of_last < size) {
    std::string tail(static_cast<std::size_t>(std::min<std::uint64_t>(size - end_of_last, 1 << 20)), '\0');
    std::fseek(f, static_cast<long>(end_of_last), SEEK_SET);
    tail.resize(std::fread(tail.data(), 1, tail.size(), f));
    grib_after = tail.find("GRIB") != std::string::npos;
  }
  if (err != 0 || grib_after)
    throw DataError(path + ": the bytes from " + std::to_string(end_of_last) +
                    " on hold a truncated or damaged GRIB message" + (err ? std::string(" (ecCodes: ") + codes_get_error_message(err) + ")" : "") +
                    "; the file is " + std::to_string(size) + " bytes");
}

// One file: every message read, the heights at the level kept.
void scan_file(const std::string& path, const GribScanOptions& o, GribIndex& index, std::string& first_where,
               grib::GridCache& cache, ParameterNames& names) {
  std::error_code ec;
  if (!std::filesystem::exists(path, ec)) throw InputError(path + ": no such file");
  if (std::filesystem::is_directory(path, ec)) throw InputError(path + ": is a folder, not a file");
  FilePtr f(std::fopen(path.c_str(), "rb"));
  if (!f) throw InputError(path + ": cannot open for reading");
  FileTally tally;
  std::uint64_t end_of_last = 0;
  int err = 0;
  for (;;) {
    codes_handle* raw = codes_handle_new_from_file(nullptr, f.get(), PRODUCT_GRIB, &err);
    off_t offset = 0;
    if (raw && codes_get_message_offset(raw, &offset) != 0) offset = -1;
    grib::Handle h(raw, path + ": message at byte " + std::to_string(offset));
    if (!h.valid()) break;
    GribMessage m = describe_message(h, path, static_cast<std::uint64_t>(offset), names);
    end_of_last = m.offset + m.length;
    const auto to_metres = height_to_metres(m.param_id, m.short_name);
    if (!to_metres) {
      ++tally.other_parameters[m.short_name + " (paramId " + std::to_string(m.param_id) + ")"];
      continue;
    }
    const auto hpa = isobaric_hpa(h, m.type_of_level);
    if (!hpa) {
      ++tally.other_level_types[m.type_of_level];
      continue;
    }
    ++tally.height_levels[*hpa];
    if (o.level_hpa && std::abs(*hpa - *o.level_hpa) > 1e-6) continue;
    m.to_metres = *to_metres;
    m.level_hpa = *hpa;
    describe_field(h, m);
    check_grid(h, index, first_where, cache);
    index.messages.push_back(std::move(m));
    ++tally.kept;
  }
  check_file_end(path, f.get(), end_of_last, err);
  if (tally.kept == 0) refuse_file(path, tally, o);
}

auto order_key(const GribMessage& m) {
  return std::make_tuple(day_number(m.init.date), m.init.seconds_of_day, m.member, m.lead_hours, m.level_hpa);
}

void refuse_duplicates(const std::vector<GribMessage>& sorted) {
  for (std::size_t i = 1; i < sorted.size(); ++i) {
    const GribMessage &a = sorted[i - 1], &b = sorted[i];
    if (order_key(a) != order_key(b)) continue;
    throw DataError(b.where() + ": duplicates " + a.where() + ": both are member " + std::to_string(b.member) +
                    ", initialisation " + to_string(b.init.date) + " " +
                    std::to_string(static_cast<int>(b.init.seconds_of_day) / 3600) + " UTC, lead " +
                    fmt_number(b.lead_hours) + " h, " + fmt_number(b.level_hpa) + " hPa; keep one of them");
  }
}

}  // namespace

bool GribGrid::same_as(const GribGrid& o, double tol) const {
  // Longitudes compare modulo 360: GRIB 1 writers store 330 E as -30 E.
  auto close = [tol](const std::vector<double>& a, const std::vector<double>& b, double turn) {
    if (a.size() != b.size()) return false;
    for (std::size_t i = 0; i < a.size(); ++i) {
      double d = std::abs(a[i] - b[i]);
      if (turn > 0) d = std::min(std::fmod(d, turn), turn - std::fmod(d, turn));
      if (d > tol) return false;
    }
    return true;
  };
  return type == o.type && ni == o.ni && nj == o.nj && j_points_consecutive == o.j_points_consecutive &&
         close(latitudes, o.latitudes, 0.0) && close(longitudes, o.longitudes, 360.0);
}

std::string GribGrid::describe() const {
  std::string s = type + " " + std::to_string(ni) + " x " + std::to_string(nj);
  if (!latitudes.empty() && !longitudes.empty())
    s += " (" + fmt_number(latitudes.front()) + " .. " + fmt_number(latitudes.back()) + " N, " +
         fmt_number(longitudes.front()) + " .. " + fmt_number(longitudes.back()) + " E)";
  if (j_points_consecutive) s += " stored column by column";
  return s;
}

std::string GribMessage::where() const {
  return path + ": message at byte " + std::to_string(offset);
}

std::optional<double> height_to_metres(long param_id, const std::string& short_name) {
  if (param_id == kParamGeopotential || (param_id == 0 && short_name == "z")) return 1.0 / kStandardGravity;
  if (param_id == kParamGeopotentialHeight || (param_id == 0 && short_name == "gh")) return 1.0;
  return std::nullopt;
}

double step_to_hours(long value, long unit, const std::string& where) {
  double hours_per_unit = 0.0;
  switch (unit) {
    case 0: hours_per_unit = 1.0 / 60.0; break;     // minute
    case 1: hours_per_unit = 1.0; break;            // hour
    case 2: hours_per_unit = 24.0; break;           // day
    case 10: hours_per_unit = 3.0; break;
    case 11: hours_per_unit = 6.0; break;
    case 12: hours_per_unit = 12.0; break;
    case 13: hours_per_unit = 1.0 / 3600.0; break;  // second
    case 14: hours_per_unit = 0.25; break;          // 15 minutes
    case 15: hours_per_unit = 0.5; break;           // 30 minutes
    default:
      throw DataError(where + ": step unit code " + std::to_string(unit) +
                      " (months, years or unknown) cannot be turned into hours");
  }
  return static_cast<double>(value) * hours_per_unit;
}

GribIndex scan_grib_heights(const std::vector<std::string>& paths, const GribScanOptions& options) {
  if (paths.empty()) throw InputError("no GRIB file given");
  grib::quiet_eccodes();
  GribIndex index;
  index.paths = paths;
  std::string first_where;
  grib::GridCache cache;
  ParameterNames names;
  for (const std::string& path : paths) scan_file(path, options, index, first_where, cache, names);
  std::stable_sort(index.messages.begin(), index.messages.end(),
                   [](const GribMessage& a, const GribMessage& b) { return order_key(a) < order_key(b); });
  refuse_duplicates(index.messages);
  return index;
}

}  // namespace isohypse
