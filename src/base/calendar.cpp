#include "isohypse/base/calendar.hpp"

#include <algorithm>
#include <array>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <cstdio>
#include <sstream>

#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

std::string lower(std::string_view s) {
  std::string out(s);
  std::transform(out.begin(), out.end(), out.begin(), [](unsigned char c) { return std::tolower(c); });
  return out;
}

std::string trim(std::string_view s) {
  std::size_t a = 0, b = s.size();
  while (a < b && std::isspace(static_cast<unsigned char>(s[a]))) ++a;
  while (b > a && std::isspace(static_cast<unsigned char>(s[b - 1]))) --b;
  return std::string(s.substr(a, b - a));
}

constexpr std::array<int, 12> kMonthDays = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};

// floor division for negative numbers
std::int64_t fdiv(std::int64_t a, std::int64_t b) { return a / b - ((a % b != 0) && ((a < 0) != (b < 0))); }

// Julian day numbers (Richards' algorithms, valid for all years with floor division).
std::int64_t gregorian_jdn(std::int64_t y, int m, int d) {
  std::int64_t a = fdiv(14 - m, 12);
  std::int64_t yy = y + 4800 - a;
  std::int64_t mm = m + 12 * a - 3;
  return d + fdiv(153 * mm + 2, 5) + 365 * yy + fdiv(yy, 4) - fdiv(yy, 100) + fdiv(yy, 400) - 32045;
}
std::int64_t julian_jdn(std::int64_t y, int m, int d) {
  std::int64_t a = fdiv(14 - m, 12);
  std::int64_t yy = y + 4800 - a;
  std::int64_t mm = m + 12 * a - 3;
  return d + fdiv(153 * mm + 2, 5) + 365 * yy + fdiv(yy, 4) - 32083;
}
void gregorian_from_jdn(std::int64_t j, int& y, int& m, int& d) {
  std::int64_t a = j + 32044;
  std::int64_t b = fdiv(4 * a + 3, 146097);
  std::int64_t c = a - fdiv(146097 * b, 4);
  std::int64_t dd = fdiv(4 * c + 3, 1461);
  std::int64_t e = c - fdiv(1461 * dd, 4);
  std::int64_t mm = fdiv(5 * e + 2, 153);
  d = static_cast<int>(e - fdiv(153 * mm + 2, 5) + 1);
  m = static_cast<int>(mm + 3 - 12 * fdiv(mm, 10));
  y = static_cast<int>(100 * b + dd - 4800 + fdiv(mm, 10));
}
void julian_from_jdn(std::int64_t j, int& y, int& m, int& d) {
  std::int64_t c = j + 32082;
  std::int64_t dd = fdiv(4 * c + 3, 1461);
  std::int64_t e = c - fdiv(1461 * dd, 4);
  std::int64_t mm = fdiv(5 * e + 2, 153);
  d = static_cast<int>(e - fdiv(153 * mm + 2, 5) + 1);
  m = static_cast<int>(mm + 3 - 12 * fdiv(mm, 10));
  y = static_cast<int>(dd - 4800 + fdiv(mm, 10));
}
// JDN of 1582-10-15 (first Gregorian day of the standard calendar).
constexpr std::int64_t kGregorianStart = 2299161;

bool gregorian_leap(int y) { return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0; }
bool julian_leap(int y) { return fdiv(y, 4) * 4 == y; }

int cumulative_days(int month, bool leap) {
  int n = 0;
  for (int i = 1; i < month; ++i) n += kMonthDays[i - 1] + (i == 2 && leap ? 1 : 0);
  return n;
}

}  // namespace

Calendar parse_calendar(std::string_view name) {
  std::string n = lower(trim(name));
  if (n.empty() || n == "standard" || n == "gregorian") return Calendar::Standard;
  if (n == "proleptic_gregorian") return Calendar::ProlepticGregorian;
  if (n == "julian") return Calendar::Julian;
  if (n == "noleap" || n == "365_day" || n == "no_leap") return Calendar::NoLeap;
  if (n == "all_leap" || n == "366_day") return Calendar::AllLeap;
  if (n == "360_day") return Calendar::Day360;
  throw InputError("unknown calendar '" + std::string(name) +
                   "' (valid: standard, gregorian, proleptic_gregorian, julian, noleap, 365_day, all_leap, "
                   "366_day, 360_day)");
}

std::string calendar_name(Calendar cal) {
  switch (cal) {
    case Calendar::Standard: return "standard";
    case Calendar::ProlepticGregorian: return "proleptic_gregorian";
    case Calendar::Julian: return "julian";
    case Calendar::NoLeap: return "noleap";
    case Calendar::AllLeap: return "all_leap";
    case Calendar::Day360: return "360_day";
  }
  return "standard";
}

bool is_leap_year(int year, Calendar cal) {
  switch (cal) {
    case Calendar::Standard: return year < 1582 ? julian_leap(year) : gregorian_leap(year);
    case Calendar::ProlepticGregorian: return gregorian_leap(year);
    case Calendar::Julian: return julian_leap(year);
    case Calendar::NoLeap: return false;
    case Calendar::AllLeap: return true;
    case Calendar::Day360: return false;
  }
  return false;
}

int days_in_month(int year, int month, Calendar cal) {
  if (month < 1 || month > 12) throw InputError("month " + std::to_string(month) + " is not 1..12");
  if (cal == Calendar::Day360) return 30;
  return kMonthDays[month - 1] + (month == 2 && is_leap_year(year, cal) ? 1 : 0);
}

int days_in_year(int year, Calendar cal) {
  if (cal == Calendar::Day360) return 360;
  if (cal == Calendar::Standard && year == 1582) return 355;  // ten days dropped in October
  return is_leap_year(year, cal) ? 366 : 365;
}

bool is_valid_date(int year, int month, int day, Calendar cal) {
  if (month < 1 || month > 12 || day < 1) return false;
  if (day > days_in_month(year, month, cal)) return false;
  // The standard calendar skips 1582-10-05 .. 1582-10-14.
  if (cal == Calendar::Standard && year == 1582 && month == 10 && day > 4 && day < 15) return false;
  return true;
}

Date make_date(int year, int month, int day, Calendar cal) {
  if (!is_valid_date(year, month, day, cal)) {
    char buf[64];
    std::snprintf(buf, sizeof buf, "%04d-%02d-%02d", year, month, day);
    throw InputError(std::string("the date ") + buf + " does not exist in the " + calendar_name(cal) + " calendar");
  }
  return Date{year, month, day, cal};
}

std::int64_t day_number(const Date& d) {
  switch (d.calendar) {
    case Calendar::Standard: {
      std::int64_t g = gregorian_jdn(d.year, d.month, d.day);
      return g >= kGregorianStart ? g : julian_jdn(d.year, d.month, d.day);
    }
    case Calendar::ProlepticGregorian: return gregorian_jdn(d.year, d.month, d.day);
    case Calendar::Julian: return julian_jdn(d.year, d.month, d.day);
    case Calendar::NoLeap: return std::int64_t(d.year) * 365 + cumulative_days(d.month, false) + d.day - 1;
    case Calendar::AllLeap: return std::int64_t(d.year) * 366 + cumulative_days(d.month, true) + d.day - 1;
    case Calendar::Day360: return std::int64_t(d.year) * 360 + (d.month - 1) * 30 + d.day - 1;
  }
  return 0;
}

Date from_day_number(std::int64_t n, Calendar cal) {
  Date out;
  out.calendar = cal;
  switch (cal) {
    case Calendar::Standard:
      if (n >= kGregorianStart) gregorian_from_jdn(n, out.year, out.month, out.day);
      else julian_from_jdn(n, out.year, out.month, out.day);
      return out;
    case Calendar::ProlepticGregorian: gregorian_from_jdn(n, out.year, out.month, out.day); return out;
    case Calendar::Julian: julian_from_jdn(n, out.year, out.month, out.day); return out;
    case Calendar::NoLeap:
    case Calendar::AllLeap: {
      bool leap = cal == Calendar::AllLeap;
      int len = leap ? 366 : 365;
      out.year = static_cast<int>(fdiv(n, len));
      int doy = static_cast<int>(n - std::int64_t(out.year) * len);
      int m = 1;
      while (m < 12 && doy >= cumulative_days(m + 1, leap)) ++m;
      out.month = m;
      out.day = doy - cumulative_days(m, leap) + 1;
      return out;
    }
    case Calendar::Day360: {
      out.year = static_cast<int>(fdiv(n, 360));
      int doy = static_cast<int>(n - std::int64_t(out.year) * 360);
      out.month = doy / 30 + 1;
      out.day = doy % 30 + 1;
      return out;
    }
  }
  return out;
}

Date add_days(const Date& d, std::int64_t days) { return from_day_number(day_number(d) + days, d.calendar); }

Date add_months(const Date& d, std::int64_t months) {
  std::int64_t total = std::int64_t(d.year) * 12 + (d.month - 1) + months;
  int y = static_cast<int>(fdiv(total, 12));
  int m = static_cast<int>(total - std::int64_t(y) * 12) + 1;
  int day = std::min(d.day, days_in_month(y, m, d.calendar));
  if (d.calendar == Calendar::Standard && y == 1582 && m == 10 && day > 4 && day < 15) day = 15;
  return Date{y, m, day, d.calendar};
}

std::int64_t days_between(const Date& a, const Date& b) {
  if (a.calendar != b.calendar)
    throw InputError("cannot count days between " + to_string(a) + " (" + calendar_name(a.calendar) + ") and " +
                     to_string(b) + " (" + calendar_name(b.calendar) + "): different calendars");
  return day_number(b) - day_number(a);
}

int day_of_year(const Date& d) {
  return static_cast<int>(day_number(d) - day_number(Date{d.year, 1, 1, d.calendar})) + 1;
}

bool operator<(const Date& a, const Date& b) {
  if (a.year != b.year) return a.year < b.year;
  if (a.month != b.month) return a.month < b.month;
  return a.day < b.day;
}

std::string to_string(const Date& d) {
  char buf[32];
  if (d.year >= 0) std::snprintf(buf, sizeof buf, "%04d-%02d-%02d", d.year, d.month, d.day);
  else std::snprintf(buf, sizeof buf, "-%04d-%02d-%02d", -d.year, d.month, d.day);
  return buf;
}

namespace {
// Parses "[-]Y-M-D" at the start of `s`; returns chars consumed or 0.
std::size_t parse_ymd(std::string_view s, int& y, int& m, int& d) {
  std::size_t i = 0;
  bool neg = false;
  if (i < s.size() && (s[i] == '-' || s[i] == '+')) neg = s[i++] == '-';
  auto number = [&](int& out) {
    std::size_t start = i;
    long v = 0;
    while (i < s.size() && std::isdigit(static_cast<unsigned char>(s[i])) && i - start < 9) v = v * 10 + (s[i++] - '0');
    out = static_cast<int>(v);
    return i > start;
  };
  if (!number(y)) return 0;
  if (neg) y = -y;
  if (i >= s.size() || s[i] != '-') return 0;
  ++i;
  if (!number(m)) return 0;
  if (i >= s.size() || s[i] != '-') return 0;
  ++i;
  if (!number(d)) return 0;
  return i;
}
}  // namespace

Date parse_date(std::string_view text, Calendar cal, std::string_view what) {
  std::string t = trim(text);
  int y = 0, m = 0, d = 0;
  std::size_t used = parse_ymd(t, y, m, d);
  if (used == 0 || used != t.size())
    throw InputError(std::string(what) + ": '" + t + "' is not a date (expected YYYY-MM-DD)");
  if (!is_valid_date(y, m, d, cal))
    throw InputError(std::string(what) + ": " + t + " does not exist in the " + calendar_name(cal) + " calendar");
  return Date{y, m, d, cal};
}

Date to_real_calendar(const Date& d) {
  switch (d.calendar) {
    case Calendar::ProlepticGregorian: return d;
    case Calendar::Standard:
    case Calendar::Julian: {
      if (d.calendar == Calendar::Standard && day_number(d) >= kGregorianStart)
        return Date{d.year, d.month, d.day, Calendar::ProlepticGregorian};
      return from_day_number(day_number(d), Calendar::ProlepticGregorian);
    }
    default: {
      int last = days_in_month(d.year, d.month, Calendar::ProlepticGregorian);
      return Date{d.year, d.month, std::min(d.day, last), Calendar::ProlepticGregorian};
    }
  }
}

TimeUnits parse_time_units(std::string_view units, Calendar cal) {
  TimeUnits tu;
  tu.text = std::string(units);
  std::string t = lower(trim(units));
  std::size_t since = t.find(" since ");
  if (since == std::string::npos)
    throw InputError("time units '" + tu.text + "' are not of the form 'UNIT since DATE'");
  std::string unit = trim(t.substr(0, since));
  std::string ref = trim(t.substr(since + 7));
  if (const auto per = duration_seconds_per_unit(unit)) tu.seconds_per_unit = *per;
  else if (unit == "months" || unit == "month") tu.step = TimeUnits::Step::Months;
  else if (unit == "years" || unit == "year")
    throw InputError("time units '" + tu.text +
                     "': 'years since' has no calendar meaning in CF (a UDUNITS year is 365.242198781 days); "
                     "isohypse refuses it");
  else
    throw InputError("time units '" + tu.text + "': unknown unit '" + unit +
                     "' (valid: days, hours, minutes, seconds, months)");

  int y = 0, m = 0, d = 0;
  std::size_t used = parse_ymd(ref, y, m, d);
  if (used == 0) throw InputError("time units '" + tu.text + "': cannot read the reference date '" + ref + "'");
  if (!is_valid_date(y, m, d, cal))
    throw InputError("time units '" + tu.text + "': the reference date does not exist in the " +
                     calendar_name(cal) + " calendar");
  tu.epoch = Date{y, m, d, cal};
  // Optional time of day and zone: [T| ]hh[:mm[:ss[.fff]]] [Z|UTC|+hh[:mm]|-hh[:mm]]
  std::string rest = trim(ref.substr(used));
  if (!rest.empty() && rest[0] == 't') rest = trim(rest.substr(1));
  double seconds = 0.0;
  if (!rest.empty() && std::isdigit(static_cast<unsigned char>(rest[0]))) {
    int hh = 0, mm = 0;
    double ss = 0.0;
    int consumed = 0;
    if (std::sscanf(rest.c_str(), "%d:%d:%lf%n", &hh, &mm, &ss, &consumed) == 3) {
    } else if (std::sscanf(rest.c_str(), "%d:%d%n", &hh, &mm, &consumed) == 2) {
      ss = 0;
    } else if (std::sscanf(rest.c_str(), "%d%n", &hh, &consumed) == 1) {
      mm = 0;
      ss = 0;
    } else {
      throw InputError("time units '" + tu.text + "': cannot read the time of day");
    }
    if (hh < 0 || hh > 24 || mm < 0 || mm > 59 || ss < 0 || ss >= 61)
      throw InputError("time units '" + tu.text + "': time of day out of range");
    seconds = hh * 3600.0 + mm * 60.0 + ss;
    rest = trim(rest.substr(static_cast<std::size_t>(consumed)));
  }
  if (!rest.empty() && rest != "z" && rest != "utc" && rest != "gmt") {
    int zh = 0, zm = 0;
    char sign = rest[0];
    std::string z = rest.substr(1);
    if ((sign == '+' || sign == '-') &&
        (std::sscanf(z.c_str(), "%d:%d", &zh, &zm) >= 1)) {
      if (z.find(':') == std::string::npos && z.size() == 4) {  // +hhmm
        zh = std::stoi(z.substr(0, 2));
        zm = std::stoi(z.substr(2, 2));
      }
      double offset = zh * 3600.0 + zm * 60.0;
      seconds -= (sign == '+' ? offset : -offset);
    } else {
      throw InputError("time units '" + tu.text + "': cannot read the time zone '" + rest + "'");
    }
  }
  tu.epoch_seconds_of_day = seconds;
  if (tu.step == TimeUnits::Step::Months && seconds != 0.0)
    throw InputError("time units '" + tu.text + "': 'months since' needs a reference at midnight");
  return tu;
}

namespace {

[[noreturn]] void throw_outside_years(double value, const TimeUnits& units) {
  std::ostringstream v;
  v << value;
  throw DataError("time value " + v.str() + " in '" + units.text +
                  "' lies outside the years 1-9999 that isohypse reads (a damaged or mislabelled time)");
}

}  // namespace

Instant decode_time(double value, const TimeUnits& units) {
  if (!std::isfinite(value)) throw DataError("time value is missing or not finite (units '" + units.text + "')");
  if (units.step == TimeUnits::Step::Months) {
    double whole = std::round(value);
    if (std::abs(value - whole) > 1e-6)
      throw DataError("time value " + std::to_string(value) + " in '" + units.text +
                      "' is not a whole number of months: isohypse decodes 'months since' as calendar months only");
    if (std::abs(whole) > 12.0 * 10000.0) throw_outside_years(value, units);
    return Instant{add_months(units.epoch, static_cast<std::int64_t>(whole)), 0.0};
  }
  // Whole seconds first: float time values like 0.99999994 days mean midnight.
  double total = std::round(value * units.seconds_per_unit + units.epoch_seconds_of_day);
  double days = std::floor(total / 86400.0);
  double sod = total - days * 86400.0;
  // Years 1-9999 only (issue 15): a damaged time value is refused before it can overflow the day arithmetic.
  constexpr double kMostDays = 366.0 * 10000.0;
  if (std::abs(days) > kMostDays) throw_outside_years(value, units);
  const Instant t{add_days(units.epoch, static_cast<std::int64_t>(days)), sod};
  if (t.date.year < 1 || t.date.year > 9999) throw_outside_years(value, units);
  return t;
}

std::optional<double> duration_seconds_per_unit(std::string_view units) {
  const std::string u = lower(trim(units));
  if (u == "days" || u == "day" || u == "d") return 86400.0;
  if (u == "hours" || u == "hour" || u == "hrs" || u == "hr" || u == "h") return 3600.0;
  if (u == "minutes" || u == "minute" || u == "mins" || u == "min") return 60.0;
  if (u == "seconds" || u == "second" || u == "secs" || u == "sec" || u == "s") return 1.0;
  return std::nullopt;
}

Instant add_duration(const Instant& from, double value, double seconds_per_unit) {
  TimeUnits tu;
  tu.seconds_per_unit = seconds_per_unit;
  tu.epoch = from.date;
  tu.epoch_seconds_of_day = from.seconds_of_day;
  tu.text = "a duration";
  return decode_time(value, tu);
}

int position_in_365_day_year(const Date& d) {
  int pos = 0;
  for (int m = 1; m < d.month; ++m) pos += days_in_month(2001, m, Calendar::NoLeap);
  return pos + std::min(d.day, days_in_month(2001, d.month, Calendar::NoLeap)) - 1;
}

int days_apart_in_year(const Date& a, const Date& b) {
  const int d = std::abs(position_in_365_day_year(a) - position_in_365_day_year(b));
  return std::min(d, 365 - d);
}

}  // namespace isohypse
