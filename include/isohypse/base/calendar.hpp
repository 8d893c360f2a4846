// Dates that know their calendar, and CF time decoding.
//
// Follows CF Conventions ch. 4.4: units "UNIT since DATE [TIME] [ZONE]" with
// UNIT one of days, hours, minutes, seconds (and their abbreviations), and the
// calendars standard (= gregorian: Julian before 1582-10-15), proleptic_gregorian,
// julian, noleap (= 365_day), all_leap (= 366_day) and 360_day.
// "months since" is not a CF calendar unit; isohypse decodes it as whole
// calendar months (value 13 since 1958-01-01 is 1959-02-01) and refuses
// non-integer month values. "years since" is refused.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace isohypse {

enum class Calendar { Standard, ProlepticGregorian, Julian, NoLeap, AllLeap, Day360 };

// Parses a CF calendar attribute (case-insensitive, aliases accepted; empty
// means standard). Throws InputError listing the valid names.
Calendar parse_calendar(std::string_view name);
// The canonical CF name: "standard", "proleptic_gregorian", "julian",
// "noleap", "all_leap", "360_day".
std::string calendar_name(Calendar cal);

// A day in a given calendar. Always valid once constructed by the functions
// below (make_date throws on an impossible date such as 2001-02-29 noleap).
struct Date {
  int year = 1970;
  int month = 1;
  int day = 1;
  Calendar calendar = Calendar::Standard;

  friend bool operator==(const Date& a, const Date& b) = default;
};

bool is_leap_year(int year, Calendar cal);
int days_in_month(int year, int month, Calendar cal);
int days_in_year(int year, Calendar cal);
bool is_valid_date(int year, int month, int day, Calendar cal);
// Throws InputError naming the date and calendar when it does not exist.
Date make_date(int year, int month, int day, Calendar cal = Calendar::Standard);

// Day count from a fixed epoch of the date's calendar; consecutive days differ
// by one. Only differences between dates of one calendar are meaningful.
std::int64_t day_number(const Date& d);
Date from_day_number(std::int64_t n, Calendar cal);
Date add_days(const Date& d, std::int64_t days);
Date add_months(const Date& d, std::int64_t months);  // day clamped to month end
// b - a in days; both must share a calendar (throws InputError otherwise).
std::int64_t days_between(const Date& a, const Date& b);
// 1-based day of the year (1..360/365/366).
int day_of_year(const Date& d);
// Days apart in the year, ignoring the years: both dates placed on a
// 365-day year by month and day (29 February shares 28 February's place),
// the shorter way round (0..182). Reforecasts "near the same day of the
// year" are chosen with it.
int days_apart_in_year(const Date& a, const Date& b);

// The date's place in a 365-day year, 0 (1 January) to 364 (31 December);
// 29 February and the 360-day calendar's 30 February fall on the month's
// last day. What days_apart_in_year compares.
int position_in_365_day_year(const Date& d);
// Strict weak order within one calendar (compares year, month, day).
bool operator<(const Date& a, const Date& b);

// "YYYY-MM-DD" (years below 1000 zero-padded, negative years with a sign).
std::string to_string(const Date& d);
// Parses "YYYY-MM-DD" (or "YYYY-M-D"); throws InputError naming `what`.
Date parse_date(std::string_view text, Calendar cal = Calendar::Standard,
                std::string_view what = "date");

// The same day on the real (proleptic Gregorian) calendar: the same
// year-month-day where it exists there; a model day without a real twin
// (360_day 02-29 and 02-30, all_leap 02-29 in a common year) maps to the last
// day of that month. Julian/standard dates before 1582-10-15 are converted by
// day number.
Date to_real_calendar(const Date& d);

// A decoded CF time: the day, and the seconds since its midnight.
struct Instant {
  Date date;
  double seconds_of_day = 0.0;
};

// Parsed CF time units.
struct TimeUnits {
  enum class Step { Seconds, Months };
  Step step = Step::Seconds;
  double seconds_per_unit = 86400.0;  // for Step::Seconds
  Date epoch;                          // in the file's calendar
  double epoch_seconds_of_day = 0.0;   // time of day of the epoch, minus any zone offset
  std::string text;                    // the units string as given
};

// Parses "UNIT since DATE [TIME] [ZONE]". Throws InputError naming the text
// and what is wrong (unknown unit, years, a missing "since", a bad date).
TimeUnits parse_time_units(std::string_view units, Calendar cal);
// Decodes one time value; rounds to the nearest second first so that
// 0.9999999 days is the next midnight, not the previous day.
Instant decode_time(double value, const TimeUnits& units);

// Seconds per unit of a duration's units: "days", "hours", "minutes" or
// "seconds" (and their abbreviations, as in parse_time_units), with no
// "since": the units of a forecast's lead (CF forecast_period), including the
// whole days or hours that Python writers store for time deltas. nullopt for
// anything else (months and years have no fixed length).
std::optional<double> duration_seconds_per_unit(std::string_view units);
// `from` plus value x seconds_per_unit seconds, in from's calendar (rounded
// to the second as decode_time rounds). Throws DataError for a value that is
// not finite.
Instant add_duration(const Instant& from, double value, double seconds_per_unit);

}  // namespace isohypse
