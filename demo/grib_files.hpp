// The demo world's files again in GRIB 2 (through ecCodes), as operational
// centres and archives ship them:
// - forecasts: one file per initialisation, one message per member and lead
//   (geopotential height at 500 hPa, product definition template 4.1 with the
//   perturbation number, the control member 0 included; the step in hours;
//   rows north to south; simple packing at 24 bits);
// - reforecasts: one file per day of the year holding that day's
//   reforecasts of every past year (the "hindcast" files of sub-seasonal
//   archives), the same messages, CCSDS packing at 16 bits (exact for the
//   demo's heights, rounded to 0.5 m);
// - reanalysis: one file a year of daily 00 UTC geopotential (m2 s-2) at
//   500 hPa, template 4.0, rows north to south, CCSDS at 16 bits, the
//   NetCDF file's missing values as missing points of a bitmap.
// Every file is written to a temporary name and renamed at the end.
#pragma once

#include <armadillo>
#include <string>
#include <vector>

#include "files.hpp"

namespace demo {

// Sets C and D's members `runs` (from model_run, same init) on the forecast
// grid, written to `path`.
void write_model_run_grib(const Surface& surface, const isohypse::Date& init, const std::vector<Trajectory>& runs,
                          const std::string& path);

// Several initialisations (each with its members, from model_run) in one
// file, for the reforecasts of one day of the year.
struct GribRun {
  isohypse::Date init;
  std::vector<Trajectory> members;
};
void write_reforecasts_grib(const Surface& surface, const std::vector<GribRun>& runs, const std::string& path);

// One year of the reanalysis: `phi` (lat.size() * lon.size() x days.size(),
// latitude-major in the order of `lat`, m2 s-2, NaN where missing).
void write_reanalysis_year_grib(const std::vector<double>& lat, const std::vector<double>& lon,
                                const std::vector<isohypse::Date>& days, const arma::mat& phi,
                                const std::string& path);

}  // namespace demo
