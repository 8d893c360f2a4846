// Calendar arithmetic against the CF Conventions' calendar definitions
// (CF Conventions 1.10, ch. 4.4.1) and the check values of ../shared/METHODS.md §1,
// which were recomputed with cftime 1.6.
#include <doctest/doctest.h>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"

using namespace isohypse;

static std::string decode(const char* units, const char* cal, double v) {
  Calendar c = parse_calendar(cal);
  return to_string(decode_time(v, parse_time_units(units, c)).date);
}

TEST_CASE("calendar: CF day offsets (METHODS.md §1, cftime check values)") {
  CHECK(decode("days since 2000-01-01", "standard", 59) == "2000-02-29");
  CHECK(decode("days since 2000-01-01", "julian", 59) == "2000-02-29");
  CHECK(decode("days since 2000-01-01", "all_leap", 59) == "2000-02-29");
  CHECK(decode("days since 2000-01-01", "noleap", 59) == "2000-03-01");
  CHECK(decode("days since 2000-01-01", "360_day", 59) == "2000-02-30");
  CHECK(decode("days since 2000-01-01", "standard", 366) == "2001-01-01");
  CHECK(decode("days since 2000-01-01", "noleap", 366) == "2001-01-02");
  CHECK(decode("days since 2000-01-01", "360_day", 366) == "2001-01-07");
  CHECK(decode("days since 1900-01-01", "standard", 59) == "1900-03-01");
  CHECK(decode("days since 1900-01-01", "proleptic_gregorian", 59) == "1900-03-01");
  CHECK(decode("days since 1900-01-01", "julian", 59) == "1900-02-29");
  CHECK(decode("hours since 1900-01-01 00:00:00.0", "gregorian", 692496) == "1979-01-01");
}

TEST_CASE("calendar: day sequences across month ends (CF Conventions ch. 4.4.1 definitions)") {
  // 360_day: every month has 30 days, so 2001-02-30 exists and is followed by 2001-03-01.
  Date d = make_date(2001, 2, 30, Calendar::Day360);
  CHECK(to_string(add_days(d, 1)) == "2001-03-01");
  // noleap: no 29 February, ever.
  CHECK(to_string(add_days(make_date(2000, 2, 28, Calendar::NoLeap), 1)) == "2000-03-01");
  CHECK_THROWS_AS(make_date(2000, 2, 29, Calendar::NoLeap), InputError);
  // julian: every fourth year is leap, 1900 included.
  CHECK(is_valid_date(1900, 2, 29, Calendar::Julian));
  CHECK_FALSE(is_valid_date(1900, 2, 29, Calendar::ProlepticGregorian));
  // standard: Julian before 1582-10-15, the day after 1582-10-04 is 1582-10-15.
  CHECK(to_string(add_days(make_date(1582, 10, 4), 1)) == "1582-10-15");
  CHECK(days_in_year(2000, Calendar::AllLeap) == 366);
  CHECK(days_in_year(2001, Calendar::Day360) == 360);
  CHECK(day_of_year(make_date(2001, 12, 30, Calendar::Day360)) == 360);
  CHECK(day_of_year(make_date(2004, 12, 31)) == 366);
}

TEST_CASE("calendar: round trips of day numbers in every calendar") {
  for (Calendar c : {Calendar::Standard, Calendar::ProlepticGregorian, Calendar::Julian, Calendar::NoLeap,
                     Calendar::AllLeap, Calendar::Day360}) {
    Date d = make_date(1950, 1, 1, c);
    for (int i = 0; i < 40000; ++i) {
      Date n = add_days(d, 1);
      REQUIRE(days_between(d, n) == 1);
      REQUIRE(is_valid_date(n.year, n.month, n.day, c));
      REQUIRE(d < n);
      d = n;
    }
  }
}

TEST_CASE("calendar: time units with times of day, zones and sub-daily steps") {
  TimeUnits tu = parse_time_units("hours since 2020-01-01T12:00:00Z", Calendar::Standard);
  Instant i = decode_time(18, tu);
  CHECK(to_string(i.date) == "2020-01-02");
  CHECK(i.seconds_of_day == doctest::Approx(6 * 3600));
  // 0.99999994 days (a float) is the next midnight, not the previous day.
  CHECK(decode("days since 2020-01-01", "standard", 0.99999994) == "2020-01-02");
  CHECK(decode("seconds since 1970-01-01 00:00:00 +01:00", "standard", 3600) == "1970-01-01");
  CHECK(decode("minutes since 1970-1-1", "standard", 1440) == "1970-01-02");
}

TEST_CASE("calendar: months since is decoded as calendar months; years refused") {
  // hgt.nc of libncarg-data uses "months since 1958-1-1"; value 13 is February 1959.
  CHECK(decode("months since 1958-1-1 00:00:00", "standard", 13) == "1959-02-01");
  TimeUnits tu = parse_time_units("months since 1958-1-1", Calendar::Standard);
  CHECK_THROWS_AS(decode_time(1.5, tu), DataError);
  CHECK_THROWS_AS(parse_time_units("years since 2000-01-01", Calendar::Standard), InputError);
  CHECK_THROWS_AS(parse_time_units("fortnights since 2000-01-01", Calendar::Standard), InputError);
  CHECK_THROWS_AS(parse_time_units("days after 2000-01-01", Calendar::Standard), InputError);
  CHECK_THROWS_AS(parse_calendar("martian"), InputError);
}

TEST_CASE("calendar: model dates on the real calendar") {
  CHECK(to_string(to_real_calendar(make_date(2001, 2, 30, Calendar::Day360))) == "2001-02-28");
  CHECK(to_string(to_real_calendar(make_date(2004, 2, 30, Calendar::Day360))) == "2004-02-29");
  CHECK(to_string(to_real_calendar(make_date(2026, 1, 15, Calendar::NoLeap))) == "2026-01-15");
  CHECK(to_real_calendar(make_date(2026, 1, 15, Calendar::NoLeap)).calendar == Calendar::ProlepticGregorian);
  CHECK(parse_date("2024-02-29") == make_date(2024, 2, 29));
  CHECK_THROWS_AS(parse_date("2023-02-29"), InputError);
  CHECK_THROWS_AS(parse_date("tomorrow"), InputError);
}
