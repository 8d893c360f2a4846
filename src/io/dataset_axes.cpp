#include "io/dataset_axes.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <optional>
#include <set>
#include <sstream>

#include "io/metadata_text.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse::detail {

namespace {

bool is_lat_units(const std::string& u) {
  static const std::set<std::string> ok = {"degrees_north", "degree_north", "degree_n", "degrees_n", "degreen",
                                           "degreesn"};
  return ok.count(lower(u)) > 0;
}

bool is_lon_units(const std::string& u) {
  static const std::set<std::string> ok = {"degrees_east", "degree_east", "degree_e", "degrees_e", "degreee",
                                           "degreese"};
  return ok.count(lower(u)) > 0;
}

// hPa per unit of a pressure coordinate's units, or 0 when not pressure.
double hpa_per_unit(const std::string& units) {
  const std::string u = lower(units);
  if (u == "hpa" || u == "mbar" || u == "millibar" || u == "millibars" || u == "mb") return 1.0;
  if (u == "pa") return 0.01;
  if (u == "kpa") return 10.0;
  return 0.0;
}

// A dimension's role, by the CF rules on its coordinate variable (units,
// standard_name, axis), never by its name; members alone may also be known
// by the names GRIB converters and ensemble writers give them (number,
// member, ensemble, realization), which carry no CF unit.
Role role_of(const nc::File& f, const nc::Dim& dim) {
  auto cv = f.coordinate_var(dim);
  const std::string units = cv ? f.text_att(cv->id, "units").value_or("") : "";
  const std::string sn = cv ? lower(f.text_att(cv->id, "standard_name").value_or("")) : "";
  const std::string axis = cv ? lower(f.text_att(cv->id, "axis").value_or("")) : "";
  const std::string n = lower(dim.name);
  if (is_lat_units(units) || sn == "latitude" || sn == "grid_latitude" || axis == "y") return Role::Lat;
  if (is_lon_units(units) || sn == "longitude" || sn == "grid_longitude" || axis == "x") return Role::Lon;
  // A lead: a duration ("days", "hours": no "since") or forecast_period, before the time axis (a lead may say axis T).
  if (duration_seconds_per_unit(units) || sn == "forecast_period") return Role::Lead;
  if (lower(units).find(" since ") != std::string::npos || sn == "time" || axis == "t") return Role::Time;
  if (hpa_per_unit(units) > 0 || sn == "air_pressure" || axis == "z") return Role::Level;
  if (sn == "realization" || n == "number" || n == "member" || n == "ensemble" || n == "realization" || n == "ens" ||
      n == "ensemble_member")
    return Role::Member;
  return Role::Other;
}

std::vector<std::string> dimension_names(const nc::File& f, const nc::Var& var) {
  std::vector<std::string> names;
  for (int d : var.dims) names.push_back(f.dim(d).name);
  return names;
}

std::vector<double> coordinate_values(const nc::File& f, const nc::Var& var, int position, const char* what,
                                      const std::string& path) {
  const nc::Dim d = f.dim(var.dims[position]);
  auto cv = f.coordinate_var(d);
  if (!cv) throw DataError(path + ": dimension '" + d.name + "' (" + what + ") has no coordinate variable");
  return f.read_all(cv->id);
}

// A level dimension's values in hPa: by the coordinate's units, else Pa
// when the largest value exceeds 2000; a single unnamed level is taken as is.
std::vector<double> levels_in_hpa(const std::vector<double>& raw, const std::string& units, std::size_t length) {
  double factor = hpa_per_unit(units);
  if (factor == 0) {
    if (raw.empty() && length == 1) factor = 1;
    else if (!raw.empty()) factor = *std::max_element(raw.begin(), raw.end()) > 2000 ? 0.01 : 1.0;
  }
  std::vector<double> out;
  for (double x : raw) out.push_back(x * factor);
  return out;
}

void choose_level_from_dimension(const nc::File& f, const nc::Dim& d, double level_hpa, DatasetInfo& info) {
  auto cv = f.coordinate_var(d);
  const std::vector<double> raw = cv ? f.read_all(cv->id) : std::vector<double>{};
  const std::string units = cv ? f.text_att(cv->id, "units").value_or("") : "";
  info.levels = levels_in_hpa(raw, units, d.length);
  std::optional<std::size_t> pick;
  for (std::size_t i = 0; i < info.levels.size(); ++i)
    if (std::abs(info.levels[i] - level_hpa) < 0.01) pick = i;
  if (info.levels.empty() && d.length == 1) pick = 0;
  if (!pick) {
    std::vector<std::string> lv;
    for (double x : info.levels) lv.push_back(number_text(x));
    throw DataError(info.path + ": no " + number_text(level_hpa) + " hPa level in dimension '" + d.name +
                    "' (levels: " + join(lv) + " hPa)");
  }
  info.level_index = *pick;
  info.level_note = "level " + number_text(level_hpa) + " hPa from dimension '" + d.name + "'" +
                    (units.empty() ? "" : " (units " + units + ")");
}

void check_single_level(const nc::File& f, const nc::Var& var, double level_hpa, DatasetInfo& info) {
  std::optional<double> attr;
  for (const char* a : {"level", "lev", "plev", "pressure_level"})
    if (auto v = f.num_att(var.id, a); v && !v->empty()) attr = (*v)[0];
  // The attribute may be in hPa or in Pa.
  if (attr && std::abs(*attr - level_hpa) > 0.01 && std::abs(*attr * 0.01 - level_hpa) > 0.01)
    throw DataError(info.path + ": variable '" + info.variable + "' is at level " + number_text(*attr) + ", not " +
                    number_text(level_hpa) + " hPa");
  info.level_note = attr ? "single-level file (attribute lev = " + number_text(*attr) + ")"
                         : "single-level file (no level dimension or attribute; taken as " + number_text(level_hpa) +
                               " hPa)";
}

// A time coordinate: its calendar and decoded values (units "UNIT since DATE").
std::vector<Instant> decoded_times(const nc::File& f, const nc::Var& v, Calendar& calendar) {
  calendar = parse_calendar(f.text_att(v.id, "calendar").value_or("standard"));
  const TimeUnits tu = parse_time_units(f.text_att(v.id, "units").value_or(""), calendar);
  std::vector<Instant> out;
  for (double x : f.read_all(v.id)) out.push_back(decode_time(x, tu));
  return out;
}

// The valid-time coordinate of a lead layout: a variable named in var's
// `coordinates` attribute over the lead dimension (and the initialisation
// dimension before it, if any) whose units are "UNIT since DATE".
std::optional<nc::Var> valid_time_coordinate(const nc::File& f, const nc::Var& var, int lead_dim, int init_dim) {
  std::istringstream names(f.text_att(var.id, "coordinates").value_or(""));
  for (std::string name; names >> name;) {
    const auto v = f.find_var(name);
    if (!v || lower(f.text_att(v->id, "units").value_or("")).find(" since ") == std::string::npos) continue;
    if (v->dims == std::vector<int>{lead_dim} || (init_dim >= 0 && v->dims == std::vector<int>{init_dim, lead_dim}))
      return v;
  }
  return std::nullopt;
}

// The scalar reference time: a variable of standard_name
// forecast_reference_time, or named so, without dimensions.
std::optional<nc::Var> reference_time_variable(const nc::File& f) {
  for (const nc::Var& v : f.vars())
    if (v.dims.empty() && (lower(f.text_att(v.id, "standard_name").value_or("")) == "forecast_reference_time" ||
                           v.name == "forecast_reference_time"))
      return v;
  return std::nullopt;
}

// "YYYY-MM-DD HH:MM" (UTC).
std::string instant_text(const Instant& t) {
  const int minutes = static_cast<int>(std::lround(t.seconds_of_day / 60.0));
  char hm[16];
  std::snprintf(hm, sizeof hm, " %02d:%02d", minutes / 60, minutes % 60);
  return to_string(t.date) + hm;
}

// Seconds between two instants of one calendar.
double seconds_apart(const Instant& a, const Instant& b) {
  return static_cast<double>(days_between(a.date, b.date)) * 86400.0 + b.seconds_of_day - a.seconds_of_day;
}

// The initialisations' reference times: the initialisation dimension's
// coordinate when it has several, else a scalar forecast_reference_time, else
// the dimension's single value (none when there is none of these).
std::vector<Instant> reference_times(const nc::File& f, const nc::Var& var, const LeadLayout& lead,
                                     Calendar& calendar) {
  const auto init_coordinate = [&]() -> std::optional<nc::Var> {
    if (lead.init < 0) return std::nullopt;
    return f.coordinate_var(f.dim(var.dims[static_cast<std::size_t>(lead.init)]));
  }();
  const bool several = lead.init >= 0 && f.dim(var.dims[static_cast<std::size_t>(lead.init)]).length > 1;
  if (several && init_coordinate) return decoded_times(f, *init_coordinate, calendar);
  if (!several)
    if (const auto rv = reference_time_variable(f)) return {decoded_times(f, *rv, calendar).at(0)};
  if (init_coordinate) return decoded_times(f, *init_coordinate, calendar);
  return {};
}

void read_lead_times(const nc::File& f, const nc::Var& var, const LeadLayout& lead, DatasetInfo& info) {
  const nc::Dim d = f.dim(var.dims[static_cast<std::size_t>(lead.lead)]);
  const auto cv = f.coordinate_var(d);
  if (!cv) throw DataError(info.path + ": lead dimension '" + d.name + "' has no coordinate variable");
  const std::string units = f.text_att(cv->id, "units").value_or("");
  const auto per = duration_seconds_per_unit(units);
  if (!per)
    throw DataError(info.path + ": lead coordinate '" + d.name + "' has " +
                    (units.empty() ? std::string("no units") : "units '" + units + "'") +
                    ": a lead needs duration units (days, hours, minutes or seconds, without 'since')");
  const std::vector<double> steps = f.read_all(cv->id);
  const int init_dim = lead.init >= 0 ? var.dims[static_cast<std::size_t>(lead.init)] : -1;
  const std::size_t n_inits = init_dim >= 0 ? f.dim(init_dim).length : 1;
  std::vector<Instant> refs, valid;
  Calendar calendar = Calendar::Standard;
  try {
    refs = reference_times(f, var, lead, calendar);
    if (const auto vv = valid_time_coordinate(f, var, d.id, init_dim)) valid = decoded_times(f, *vv, calendar);
  } catch (const Error& e) {
    throw DataError(info.path + ": the times of lead '" + d.name + "': " + e.what());
  }
  if (refs.empty() && valid.empty())
    throw DataError(info.path + ": lead '" + d.name + "' has neither a forecast_reference_time nor a valid-time "
                    "coordinate (named in the variable's 'coordinates' attribute) to say when it starts");
  if (!valid.empty() && valid.size() != n_inits * steps.size()) valid.clear();  // 1-D beside several inits: unused
  if (refs.size() < n_inits && valid.empty())
    throw DataError(info.path + ": the " + std::to_string(n_inits) + " initialisations along '" + f.dim(init_dim).name +
                    "' have no times: give the dimension a time coordinate or a 2-D valid-time coordinate");
  for (std::size_t k = 0; refs.size() < n_inits; ++k)  // inferred from the valid times
    refs.push_back(add_duration(valid.at(k * steps.size()), -steps.front(), *per));
  for (std::size_t k = 0; k < n_inits; ++k) {
    std::vector<Instant> times;
    for (std::size_t i = 0; i < steps.size(); ++i) {
      const Instant t = add_duration(refs[k], steps[i], *per);
      const std::size_t at = k * steps.size() + i;
      if (!valid.empty() && std::abs(seconds_apart(t, valid[at])) > 60.0)
        throw DataError(info.path + ": valid time " + std::to_string(i) + (n_inits > 1 ? " of initialisation " +
                        std::to_string(k) : std::string()) + " (" + instant_text(valid[at]) + ") disagrees with "
                        "the reference time plus lead " + number_text(steps[i]) + " " + units + " (" +
                        instant_text(t) + ")");
      times.push_back(valid.empty() ? t : valid[at]);
    }
    info.valid_by_init.push_back(std::move(times));
  }
  info.times = info.valid_by_init.front();
  info.reference_time = refs.front();
  if (n_inits > 1) {
    info.init_dim = f.dim(init_dim).name;
    info.init_times = refs;
  } else {
    info.valid_by_init.clear();
  }
  info.calendar = calendar;
  info.time_dim = d.name;
  info.time_units = "lead '" + d.name + "' in " + units + " from " + instant_text(refs.front()) +
                    (n_inits > 1 ? " (" + std::to_string(n_inits) + " initialisations along '" +
                                       info.init_dim + "')" : std::string());
}

}  // namespace

std::vector<Role> dimension_roles(const nc::File& f, const nc::Var& var) {
  std::vector<Role> roles;
  for (int d : var.dims) roles.push_back(role_of(f, f.dim(d)));
  return roles;
}

LeadLayout settle_lead_axis(const nc::File& f, const nc::Var& var, std::vector<Role>& roles,
                            const DatasetInfo& info) {
  LeadLayout at;
  const std::vector<std::string> names = dimension_names(f, var);
  for (std::size_t i = 0; i < roles.size(); ++i) {
    if (roles[i] == Role::Lead) {
      if (at.lead >= 0)
        throw DataError(info.path + ": variable '" + info.variable + "' has two lead dimensions ('" +
                        names[static_cast<std::size_t>(at.lead)] + "', '" + names[i] + "')");
      at.lead = static_cast<int>(i);
    }
  }
  if (at.lead < 0) return at;
  for (std::size_t i = 0; i < roles.size(); ++i) {
    if (roles[i] != Role::Time) continue;
    at.init = static_cast<int>(i);
    roles[i] = f.dim(var.dims[i]).length == 1 ? Role::Other : Role::Init;
  }
  roles[static_cast<std::size_t>(at.lead)] = Role::Time;
  return at;
}

AxisPositions axis_positions(const nc::File& f, const nc::Var& var, const std::vector<Role>& roles,
                             const DatasetInfo& info) {
  const std::vector<std::string> dim_names = dimension_names(f, var);
  auto position_of = [&](Role r) -> int {
    int found = -1;
    for (std::size_t i = 0; i < roles.size(); ++i)
      if (roles[i] == r) {
        if (found >= 0)
          throw DataError(info.path + ": variable '" + info.variable +
                          "' has two dimensions that look like the same axis (" + dim_names[found] + ", " +
                          dim_names[i] + ")");
        found = static_cast<int>(i);
      }
    return found;
  };
  AxisPositions at;
  at.lat = position_of(Role::Lat);
  at.lon = position_of(Role::Lon);
  at.time = position_of(Role::Time);
  at.level = position_of(Role::Level);
  at.member = position_of(Role::Member);
  if (at.lat < 0 || at.lon < 0)
    throw DataError(info.path + ": variable '" + info.variable + "' (dims " + join(dim_names) +
                    ") has no latitude/longitude dimensions (looked for coordinates with units "
                    "degrees_north/degrees_east, standard_name latitude/longitude or axis Y/X)");
  for (std::size_t i = 0; i < roles.size(); ++i)
    if (roles[i] == Role::Other && f.dim(var.dims[i]).length != 1)
      throw DataError(info.path + ": variable '" + info.variable + "' has dimension '" + dim_names[i] +
                      "' of length " + std::to_string(f.dim(var.dims[i]).length) +
                      " whose coordinate says no axis isohypse reads (CF: time 'UNIT since DATE', a lead in "
                      "duration units or standard_name forecast_period, a level in hPa/Pa or axis Z, members with "
                      "standard_name realization, latitude/longitude in degrees_north/degrees_east); add the "
                      "missing attribute to the coordinate variable");
  return at;
}

void read_horizontal_axes(const nc::File& f, const nc::Var& var, const AxisPositions& at, DatasetInfo& info) {
  info.file_lat = arma::vec(coordinate_values(f, var, at.lat, "latitude", info.path));
  info.file_lon = arma::vec(coordinate_values(f, var, at.lon, "longitude", info.path));
  const arma::vec& lat = info.file_lat;
  for (arma::uword i = 0; i < lat.n_elem; ++i)
    if (!(std::abs(lat(i)) <= 90.0 + 1e-6))
      throw DataError(info.path + ": latitude " + number_text(lat(i)) + " (index " + std::to_string(i) +
                      ") lies beyond -90..90 degrees: a damaged or mislabelled latitude coordinate");
  for (arma::uword i = 0; i < info.file_lon.n_elem; ++i)
    if (!(std::abs(info.file_lon(i)) <= 720.0))
      throw DataError(info.path + ": longitude " + number_text(info.file_lon(i)) + " (index " + std::to_string(i) +
                      ") lies beyond -720..720 degrees: a damaged or mislabelled longitude coordinate");
  for (arma::uword i = 1; i < lat.n_elem; ++i)
    if ((lat(i) - lat(i - 1)) * (lat(1) - lat(0)) <= 0) throw DataError(info.path + ": latitudes are not monotonic");
  for (arma::uword i = 1; i < info.file_lon.n_elem; ++i)
    if (info.file_lon(i) <= info.file_lon(i - 1))
      throw DataError(info.path + ": longitudes are not increasing (at index " + std::to_string(i) + ")");
}

void choose_level(const nc::File& f, const nc::Var& var, const AxisPositions& at, double level_hpa,
                  DatasetInfo& info) {
  if (at.level >= 0) choose_level_from_dimension(f, f.dim(var.dims[at.level]), level_hpa, info);
  else check_single_level(f, var, level_hpa, info);
}

void read_time_axis(const nc::File& f, const nc::Var& var, const AxisPositions& at, const LeadLayout& lead,
                    DatasetInfo& info) {
  if (lead.lead >= 0) {
    read_lead_times(f, var, lead, info);
    return;
  }
  if (at.time < 0)
    throw DataError(info.path + ": variable '" + info.variable + "' (dims " + join(dimension_names(f, var)) +
                    ") has no time dimension (looked for a coordinate with units 'UNIT since DATE')");
  const nc::Dim d = f.dim(var.dims[at.time]);
  info.time_dim = d.name;
  auto cv = f.coordinate_var(d);
  if (!cv) throw DataError(info.path + ": time dimension '" + d.name + "' has no coordinate variable");
  info.time_units = f.text_att(cv->id, "units").value_or("");
  try {
    info.calendar = parse_calendar(f.text_att(cv->id, "calendar").value_or("standard"));
    const TimeUnits tu = parse_time_units(info.time_units, info.calendar);
    for (double v : f.read_all(cv->id)) info.times.push_back(decode_time(v, tu));
    if (auto rv = f.find_var("forecast_reference_time"); rv && rv->dims.empty()) {
      const std::string ru = f.text_att(rv->id, "units").value_or(info.time_units);
      const TimeUnits rtu = parse_time_units(ru, info.calendar);
      info.reference_time = decode_time(f.read_all(rv->id).at(0), rtu);
    }
  } catch (const Error& e) {
    throw DataError(info.path + ": time coordinate '" + d.name + "': " + e.what());
  }
}

void read_member_axis(const nc::File& f, const nc::Var& var, const AxisPositions& at, DatasetInfo& info) {
  if (at.member >= 0) {
    const nc::Dim d = f.dim(var.dims[at.member]);
    info.member_dim = d.name;
    info.members = d.length;
    if (auto cv = f.coordinate_var(d))
      for (double x : f.read_all(cv->id)) info.member_numbers.push_back(static_cast<int>(std::lround(x)));
    return;
  }
  for (const char* name : {"realization", "number", "member", "ensemble_member"}) {
    if (auto mv = f.find_var(name); mv && mv->dims.empty()) {
      info.member_number = static_cast<int>(f.read_all(mv->id).at(0));
      return;
    }
    if (auto a = f.num_att(NC_GLOBAL, name); a && !a->empty()) {
      info.member_number = static_cast<int>((*a)[0]);
      return;
    }
  }
}

}  // namespace isohypse::detail
