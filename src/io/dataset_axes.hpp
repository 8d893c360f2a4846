// Internal to HeightDataset: the axes of the height variable. Each dimension
// gets a role (time, level, latitude, longitude, ensemble member, or another
// of length 1), then each axis is read from its coordinate variable into
// DatasetInfo. Every message names the file (DatasetInfo::path) and, where it
// helps, the variable and its dimensions.
#pragma once

#include <vector>

#include "io/netcdf_file.hpp"
#include "isohypse/io/dataset.hpp"

namespace isohypse::detail {

enum class Role { Time, Level, Lat, Lon, Member, Other };

// The role of each dimension of `var`, slowest first, from its coordinate's
// units, standard_name or axis attribute, else from the dimension's name.
std::vector<Role> dimension_roles(const nc::File& file, const nc::Var& var);

// Where each axis is among var's dimensions (-1: absent).
struct AxisPositions {
  int lat = -1, lon = -1, time = -1, level = -1, member = -1;
};

// Throws DataError when two dimensions take one role, when latitude or
// longitude is missing, or when a dimension of another role has length > 1.
AxisPositions axis_positions(const nc::File& file, const nc::Var& var, const std::vector<Role>& roles,
                             const DatasetInfo& info);

// info.file_lat and info.file_lon as stored. Throws DataError when either
// has no coordinate variable, latitudes are not monotonic or longitudes not
// increasing.
void read_horizontal_axes(const nc::File& file, const nc::Var& var, const AxisPositions& at, DatasetInfo& info);

// info.levels (hPa), info.level_index and info.level_note for `level_hpa`.
// Without a level dimension the file is single-level: a level attribute of
// the variable, if any, must match (in hPa or Pa). Throws DataError when the
// level is not there.
void choose_level(const nc::File& file, const nc::Var& var, const AxisPositions& at, double level_hpa,
                  DatasetInfo& info);

// info.time_dim, time_units, calendar, times and reference_time. Throws
// DataError when there is no time dimension, it has no coordinate variable,
// or its units or calendar cannot be decoded.
void read_time_axis(const nc::File& file, const nc::Var& var, const AxisPositions& at, DatasetInfo& info);

// info.member_dim, members and member_numbers from a member dimension, or
// info.member_number of a per-member file (a scalar realization/number/
// member variable or global attribute).
void read_member_axis(const nc::File& file, const nc::Var& var, const AxisPositions& at, DatasetInfo& info);

}  // namespace isohypse::detail
