// Writers for the demo world's files. Each writes to a temporary name beside
// the target and renames it into place (isohypse::AtomicFile), so a folder
// never holds half a file. Heights come from a demo::Surface on the file's
// grid; conventions (orientation, packing, calendars) are the file kind's own.
#pragma once

#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "world.hpp"

namespace demo {

inline constexpr double kG0 = 9.80665;  // standard gravity, m s-2 (WMO)

// Realities planted in the reanalysis: whole days left out of the files, and
// single values written as _FillValue.
struct Realities {
  struct Hole {
    isohypse::Date day;
    double lat, lon;
  };
  std::vector<isohypse::Date> missing_days;
  std::vector<Hole> holes;
};

// Set A: one year of daily 00 UTC geopotential (`z`, int16 packed per file),
// NetCDF-4 classic model, on the axes given (latitude descending); `surface`
// holds the world's terms on Points::product(lat, lon). A `grib_path` also
// writes the file's values as GRIB 2 there (grib_files.hpp).
void write_reanalysis_year(const World& world, const Surface& surface, const std::vector<double>& lat,
                           const std::vector<double>& lon, int year, const Realities& realities,
                           const std::string& path, const std::string& grib_path = "");

// Set B: float heights `hgt` (time, level, latitude, longitude) at 850, 500
// and 250 hPa, global at `step` degrees (latitude ascending, longitude
// 0..360-step), "days since 2025-01-01" standard calendar, NetCDF-3 64-bit offset.
void write_analysis(const World& world, const isohypse::Date& first, const isohypse::Date& last, double step,
                    const std::string& path);

// The forecast grid shared by sets C and D (and the no-skill system's C' and
// D'): 2 degrees, 16N-84N, 164E-326E.
Points forecast_points();

// The planted trajectories of members 0..members-1 of `system` initialised
// on `init` (a real date).
std::vector<Trajectory> model_run(const World& world, const isohypse::Date& init, int members,
                                  ModelSystem system = ModelSystem::skilful);

// The forecast grid (grids C and D): 16N-84N, 164E-326E every 2 degrees, ascending.
std::vector<double> forecast_lat();
std::vector<double> forecast_lon();

// The heights (m) of every member and lead of `runs` (one initialisation,
// from model_run) on `surface`, rounded to 0.5 m as every forecast file
// stores them: points x (member, lead), member-major.
arma::mat member_heights(const Surface& surface, const std::vector<Trajectory>& runs);

// Sets C and D: the members of `runs` (from model_run, same init), `gh`
// (number, time, latitude, longitude) in metres on the noleap calendar,
// NetCDF-4 with deflate.
void write_model_run(const Surface& surface, const isohypse::Date& init, const std::vector<Trajectory>& runs,
                     const std::string& path);

// The same run in another CF layout, as providers of sub-seasonal forecasts
// ship it: `z` (time = 1 initialisation, step, member, lat, lon) as
// geopotential in m2 s-2, the step a lead in whole hours (standard_name
// forecast_period), valid_time(step) named in the variable's `coordinates`,
// dimensions named otherwise than in write_model_run (y, x, member, step).
void write_model_run_steps(const Surface& surface, const isohypse::Date& init, const std::vector<Trajectory>& runs,
                           const std::string& path);

// truth/patterns.nc: regime and drift patterns (m) on grid A's sector
// (20N-80N, 170E-320E at `step` degrees, latitude ascending); a noise-only
// world's file has the drift only (no regime dimension).
void write_patterns(const World& world, double step, const std::string& path);

}  // namespace demo
