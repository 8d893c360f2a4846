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

enum class Role { Time, Lead, Init, Level, Lat, Lon, Member, Other };

// The role of each dimension of `var`, slowest first, from its coordinate's
// units, standard_name or axis attribute, else from the dimension's name.
std::vector<Role> dimension_roles(const nc::File& file, const nc::Var& var);

// A forecast's lead axis (CF forecast_period: a coordinate with duration
// units, "days" or "hours" without "since", or standard_name
// forecast_period), and the initialisation's time dimension of length 1
// beside it, if any (-1: absent).
struct LeadLayout {
  int lead = -1, init = -1;
};

// When a dimension has Role::Lead, it becomes the variable's time axis
// (roles[lead] = Time: its valid times are read by read_time_axis) and a time
// dimension beside it the initialisations (roles[init] = Other when of
// length 1, else Init: several initialisations, or hindcast dates, in one
// file). Throws DataError for two lead dimensions.
LeadLayout settle_lead_axis(const nc::File& file, const nc::Var& var, std::vector<Role>& roles,
                            const DatasetInfo& info);

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
// or its units or calendar cannot be decoded. With a lead axis (lead.lead >=
// 0, then at.time): the valid times are those of an auxiliary coordinate
// over the lead dimension named in var's `coordinates` attribute (units
// "UNIT since DATE"), else the reference time plus the lead; the reference
// time is a scalar forecast_reference_time (by standard_name or name), else
// the initialisation dimension's value. Throws DataError when the lead has
// no duration units, when there is neither a reference time nor valid times,
// or when the valid times disagree with the reference time plus the lead.
void read_time_axis(const nc::File& file, const nc::Var& var, const AxisPositions& at, const LeadLayout& lead,
                    DatasetInfo& info);

// info.member_dim, members and member_numbers from a member dimension, or
// info.member_number of a per-member file (a scalar realization/number/
// member variable or global attribute).
void read_member_axis(const nc::File& file, const nc::Var& var, const AxisPositions& at, DatasetInfo& info);

}  // namespace isohypse::detail
