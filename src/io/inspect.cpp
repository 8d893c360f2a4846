#include "isohypse/io/inspect.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <sstream>

#include "isohypse/base/error.hpp"
#include "isohypse/base/field.hpp"
#include "io/grib_forecast.hpp"
#include "io/inspect_grib.hpp"
#include "isohypse/io/dataset.hpp"

namespace isohypse {

namespace {

nlohmann::json candidates_json(const std::vector<HeightCandidate>& cands) {
  nlohmann::json a = nlohmann::json::array();
  for (const auto& c : cands)
    a.push_back({{"name", c.name}, {"standard_name", c.standard_name}, {"units", c.units},
                 {"long_name", c.long_name}, {"dims", c.dims},
                 {"kind", c.geopotential ? "geopotential" : "geopotential_height"}});
  return a;
}

// The file's own grid: sizes, steps (axis_step), first and last values,
// latitude order and longitude convention.
nlohmann::json grid_json(const DatasetInfo& in) {
  return {{"n_lat", in.file_lat.n_elem},
          {"n_lon", in.file_lon.n_elem},
          {"lat_step", axis_step(in.file_lat)},
          {"lon_step", axis_step(in.file_lon)},
          {"lat_first", in.file_lat(0)},
          {"lat_last", in.file_lat(in.file_lat.n_elem - 1)},
          {"lat_order", in.lat_descending() ? "descending" : "ascending"},
          {"lon_first", in.file_lon(0)},
          {"lon_last", in.file_lon(in.file_lon.n_elem - 1)},
          {"lon_convention", in.lon_convention()},
          {"global_in_longitude", in.global_in_lon()}};
}

// A GRIB file's description (inspect_grib.hpp), or its error.
nlohmann::json describe_grib(const std::string& path, double level_hpa) {
  nlohmann::json j;
  j["file"] = path;
  try {
    j.update(detail::describe_grib_file(path, level_hpa));
  } catch (const Error& e) {
    j["format"] = "GRIB";
    j["error"] = e.what();
    j["error_kind"] = dynamic_cast<const InputError*>(&e) ? "input" : "data";
  }
  return j;
}

// The missing values, or (values implausible for the level) the problem:
// the description stands, the values cannot be used.
void count_missing_values(const HeightDataset& ds, nlohmann::json& j) {
  try {
    j["missing_values"] = ds.count_missing();
  } catch (const DataError& e) {
    j["missing_values"] = nullptr;
    j["values_problem"] = e.what();
    j["error"] = e.what();
    j["error_kind"] = "data";
  }
}

}  // namespace

nlohmann::json describe_file(const std::string& path, const std::string& variable, double level_hpa) {
  if (detail::is_grib_file(path)) return describe_grib(path, level_hpa);
  nlohmann::json j;
  j["file"] = path;
  try {
    HeightDataset ds = HeightDataset::open(path, variable, level_hpa);
    const DatasetInfo& in = ds.info();
    j["format"] = in.format;
    j["candidates"] = candidates_json(in.candidates);
    j["variable"] = in.variable;
    j["units"] = in.units;
    j["quantity"] = in.geopotential ? "geopotential (divided by g0 = 9.80665 m s-2 to give metres)"
                                    : "geopotential height";
    j["grid"] = grid_json(in);
    j["levels_hpa"] = in.levels;
    j["level"] = in.level_note;
    j["members"] = in.members;
    if (!in.member_dim.empty()) j["member_dim"] = in.member_dim;
    j["calendar"] = calendar_name(in.calendar);
    j["time_units"] = in.time_units;
    j["steps"] = in.times.size();
    if (in.reference_time) j["forecast_reference_time"] = to_string(in.reference_time->date);
    if (!in.times.empty()) {
      j["first"] = to_string(in.times.front().date);
      j["last"] = to_string(in.times.back().date);
      // Steps per day and missing days between the first and the last.
      std::map<std::int64_t, int> per_day;
      for (const auto& t : in.times) per_day[day_number(t.date)]++;
      int max_per_day = 0, dups = 0;
      for (auto& [d, n] : per_day) max_per_day = std::max(max_per_day, n);
      std::set<std::pair<std::int64_t, double>> seen;
      for (const auto& t : in.times) dups += !seen.insert({day_number(t.date), t.seconds_of_day}).second;
      j["steps_per_day"] = max_per_day;
      j["duplicate_steps"] = dups;
      // Missing days only make sense for daily or sub-daily data.
      std::vector<std::int64_t> diffs;
      for (auto it = std::next(per_day.begin()); it != per_day.end(); ++it)
        diffs.push_back(it->first - std::prev(it)->first);
      std::sort(diffs.begin(), diffs.end());
      std::int64_t typical = diffs.empty() ? 1 : diffs[diffs.size() / 2];
      if (typical > 1) {
        j["time_step"] = typical >= 28 && typical <= 31 ? "monthly" : "every " + std::to_string(typical) + " days";
        j["first"] = to_string(in.times.front().date);
        j["last"] = to_string(in.times.back().date);
        j["steps_per_day"] = max_per_day;
        j["duplicate_steps"] = dups;
      } else {
      j["time_step"] = max_per_day > 1 ? "sub-daily" : "daily";
      nlohmann::json gaps = nlohmann::json::array();
      std::size_t missing = 0;
      std::int64_t prev = per_day.begin()->first;
      for (auto& [d, n] : per_day) {
        if (d > prev + 1) {
          gaps.push_back({{"from", to_string(from_day_number(prev + 1, in.calendar))},
                          {"to", to_string(from_day_number(d - 1, in.calendar))}});
          missing += static_cast<std::size_t>(d - prev - 1);
        }
        prev = d;
      }
      j["missing_days"] = missing;
      j["gaps"] = gaps;
      }
    }
    const Packing& pk = in.packing;
    j["packing"] = {{"stored_type", pk.stored_type}, {"packed", pk.packed}, {"scale_factor", pk.scale_factor},
                    {"add_offset", pk.add_offset}, {"missing_codes", pk.missing}};
    if (pk.valid_min) j["packing"]["valid_min"] = *pk.valid_min;
    if (pk.valid_max) j["packing"]["valid_max"] = *pk.valid_max;
    j["chunks_inflated_by_isohypse"] = ds.inflates_chunks();
    count_missing_values(ds, j);
  } catch (const Error& e) {
    j["error"] = e.what();
    j["error_kind"] = dynamic_cast<const InputError*>(&e) ? "input" : "data";
    try {
      j["candidates"] = candidates_json(list_height_candidates(path));
    } catch (const Error&) {
    }
  }
  return j;
}

std::string describe_text(const nlohmann::json& j) {
  std::ostringstream o;
  o << j["file"].get<std::string>() << "\n";
  if (j.value("format", "") == "GRIB") {
    if (j.contains("error")) return o.str() + "  format      GRIB\n  cannot use: " + j["error"].get<std::string>() + "\n";
    return o.str() + detail::describe_grib_text(j);
  }
  if (j.contains("format")) o << "  format      " << j["format"].get<std::string>() << "\n";
  if (j.contains("candidates")) {
    o << "  candidates  ";
    if (j["candidates"].empty()) o << "none";
    bool first = true;
    for (const auto& c : j["candidates"]) {
      o << (first ? "" : "; ") << c["name"].get<std::string>() << " [" << c["units"].get<std::string>() << "]"
        << (c["standard_name"].get<std::string>().empty() ? "" : " " + c["standard_name"].get<std::string>());
      first = false;
    }
    o << "\n";
  }
  if (j.contains("error") && !j.contains("values_problem")) {
    o << "  cannot use: " << j["error"].get<std::string>() << "\n";
    return o.str();
  }
  const auto& g = j["grid"];
  o << "  variable    " << j["variable"].get<std::string>() << " in " << j["units"].get<std::string>() << " ("
    << j["quantity"].get<std::string>() << ")\n";
  o << "  grid        " << g["n_lat"] << " x " << g["n_lon"] << " points, " << g["lat_step"].get<double>() << " x "
    << g["lon_step"].get<double>() << " degrees; latitudes " << g["lat_first"].get<double>() << " to "
    << g["lat_last"].get<double>() << " (" << g["lat_order"].get<std::string>() << "); longitudes "
    << g["lon_first"].get<double>() << " to " << g["lon_last"].get<double>() << " ("
    << g["lon_convention"].get<std::string>() << ")\n";
  o << "  level       " << j["level"].get<std::string>();
  if (!j["levels_hpa"].empty()) {
    o << "; levels";
    for (const auto& l : j["levels_hpa"]) o << " " << l.get<double>();
    o << " hPa";
  }
  o << "\n";
  if (j["members"].get<int>() > 1)
    o << "  members     " << j["members"] << " (dimension " << j["member_dim"].get<std::string>() << ")\n";
  o << "  time        " << j["steps"] << " steps";
  if (j.contains("first"))
    o << ", " << j["first"].get<std::string>() << " to " << j["last"].get<std::string>() << ", "
      << j["time_step"].get<std::string>()
      << (j["steps_per_day"].get<int>() > 1 ? " (" + std::to_string(j["steps_per_day"].get<int>()) + " per day)" : "");
  o << "; calendar " << j["calendar"].get<std::string>() << "; units '" << j["time_units"].get<std::string>()
    << "'\n";
  if (j.contains("forecast_reference_time"))
    o << "  initialised " << j["forecast_reference_time"].get<std::string>() << "\n";
  if (j.contains("missing_days")) {
    o << "  missing     " << j["missing_days"] << " days";
    for (const auto& gp : j["gaps"])
      o << (gp["from"] == gp["to"] ? " [" + gp["from"].get<std::string>() + "]"
                                   : " [" + gp["from"].get<std::string>() + " to " + gp["to"].get<std::string>() + "]");
    if (j["duplicate_steps"].get<int>() > 0) o << "; " << j["duplicate_steps"] << " duplicate steps";
    o << "\n";
  }
  const auto& pk = j["packing"];
  o << "  packing     " << pk["stored_type"].get<std::string>();
  if (pk["packed"].get<bool>())
    o << " x " << pk["scale_factor"].get<double>() << " + " << pk["add_offset"].get<double>();
  o << "; missing codes";
  for (const auto& m : pk["missing_codes"]) o << " " << m.get<double>();
  if (j["missing_values"].is_null()) o << "\n  values      cannot be used: " << j["values_problem"].get<std::string>() << "\n";
  else o << "; " << j["missing_values"] << " missing values in " << j["variable"].get<std::string>() << "\n";
  if (j.value("chunks_inflated_by_isohypse", false))
    o << "  storage     compressed chunks, read directly and inflated by isohypse on every core\n";
  return o.str();
}

}  // namespace isohypse
