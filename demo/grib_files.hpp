// The demo world's forecasts in GRIB 2 (through ecCodes), as operational and
// sub-seasonal forecasts are shipped: one file per initialisation, one
// message per member and lead (geopotential height at 500 hPa, product
// definition template 4.1 with the perturbation number, the control member
// 0 included; the step in hours; rows north to south; simple packing at 24
// bits).
#pragma once

#include <string>
#include <vector>

#include "files.hpp"

namespace demo {

// Sets C and D's members `runs` (from model_run, same init) on the forecast
// grid, written to `path` (through a temporary file renamed at the end).
void write_model_run_grib(const Surface& surface, const isohypse::Date& init, const std::vector<Trajectory>& runs,
                          const std::string& path);

}  // namespace demo
