#include "io/inspect_grib.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <set>
#include <sstream>

#include "io/metadata_text.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/grib_index.hpp"

namespace isohypse::detail {

namespace {

// "YYYY-MM-DD HH:MM UTC".
std::string instant_text(const Instant& t) {
  const long s = std::lround(t.seconds_of_day);
  char hm[32];
  std::snprintf(hm, sizeof hm, " %02ld:%02ld UTC", s / 3600, (s % 3600) / 60);
  return to_string(t.date) + hm;
}

// A longitude as the messages state it: the index unwraps a row eastward
// (180 .. 535), a reader expects 180 .. 175.
double stated_longitude(double lon) { return lon >= 360.0 ? lon - 360.0 : lon; }

nlohmann::json grid_json(const GribGrid& g) {
  nlohmann::json j = {{"type", g.type},
                      {"ni", g.ni},
                      {"nj", g.nj},
                      {"scanning",
                       {{"i_scans_negatively", g.i_scans_negatively},
                        {"j_scans_positively", g.j_scans_positively},
                        {"j_points_consecutive", g.j_points_consecutive}}},
                      {"lat_first", g.latitudes.front()},
                      {"lat_last", g.latitudes.back()},
                      {"lon_first", stated_longitude(g.longitudes.front())},
                      {"lon_last", stated_longitude(g.longitudes.back())},
                      {"description", g.describe()}};
  if (g.longitudes.size() > 1) j["lon_step"] = std::abs(g.longitudes[1] - g.longitudes[0]);
  if (g.type == "regular_ll" && g.latitudes.size() > 1) j["lat_step"] = std::abs(g.latitudes[1] - g.latitudes[0]);
  return j;
}

// The parameters, each once: shortName, paramId, units and the quantity.
nlohmann::json parameters_json(const GribIndex& index) {
  std::map<long, const GribMessage*> by_param;
  for (const GribMessage& m : index.messages) by_param.emplace(m.param_id, &m);
  nlohmann::json a = nlohmann::json::array();
  for (const auto& [id, m] : by_param)
    a.push_back({{"short_name", m->short_name}, {"param_id", id}, {"units", m->units},
                 {"quantity", id == 129 ? "geopotential (divided by g0 = 9.80665 m s-2 to give metres)"
                                        : "geopotential height"}});
  return a;
}

// Initialisations, leads and valid times.
void time_json(const GribIndex& index, nlohmann::json& j) {
  std::map<std::pair<std::int64_t, double>, Instant> inits, valid;
  std::set<double> leads;
  for (const GribMessage& m : index.messages) {
    inits.emplace(std::make_pair(day_number(m.init.date), m.init.seconds_of_day), m.init);
    const Instant v = add_duration(m.init, m.lead_hours, 3600.0);
    valid.emplace(std::make_pair(day_number(v.date), v.seconds_of_day), v);
    leads.insert(m.lead_hours);
  }
  nlohmann::json list = nlohmann::json::array();
  for (const auto& [k, t] : inits) list.push_back(instant_text(t));
  j["initialisations"] = {{"count", inits.size()}, {"first", list.front()}, {"last", list.back()}};
  if (inits.size() <= 50) j["initialisations"]["list"] = list;
  j["leads_hours"] = std::vector<double>(leads.begin(), leads.end());
  std::map<std::int64_t, int> per_day;
  for (const auto& [k, t] : valid) per_day[k.first]++;
  int most = 0;
  for (const auto& [d, n] : per_day) most = std::max(most, n);
  j["valid_times"] = {{"count", valid.size()},
                      {"first", instant_text(valid.begin()->second)},
                      {"last", instant_text(valid.rbegin()->second)},
                      {"per_day", most}};
}

// Each packing type with its bits per value, and the message count of each.
nlohmann::json packing_json(const GribIndex& index) {
  std::map<std::pair<std::string, long>, int> count;
  for (const GribMessage& m : index.messages) count[{m.packing, m.bits_per_value}]++;
  nlohmann::json a = nlohmann::json::array();
  for (const auto& [k, n] : count) a.push_back({{"type", k.first}, {"bits_per_value", k.second}, {"messages", n}});
  return a;
}

}  // namespace

nlohmann::json describe_grib_file(const std::string& path, double level_hpa) {
  GribScanOptions all_levels;
  all_levels.level_hpa = std::nullopt;
  const GribIndex index = scan_grib_heights({path}, all_levels);
  nlohmann::json j;
  std::set<long> editions, members;
  std::set<double> levels;
  std::set<std::string> level_types, data_types;
  for (const GribMessage& m : index.messages) {
    editions.insert(m.edition);
    members.insert(m.member);
    levels.insert(m.level_hpa);
    level_types.insert(m.type_of_level);
    data_types.insert(m.data_type);
  }
  j["format"] = "GRIB";
  j["editions"] = std::vector<long>(editions.begin(), editions.end());
  j["messages"] = index.messages.size();
  j["parameters"] = parameters_json(index);
  j["levels_hpa"] = std::vector<double>(levels.begin(), levels.end());
  j["type_of_level"] = std::vector<std::string>(level_types.begin(), level_types.end());
  j["grid"] = grid_json(index.grid);
  j["members"] = std::vector<long>(members.begin(), members.end());
  j["data_types"] = std::vector<std::string>(data_types.begin(), data_types.end());
  time_json(index, j);
  j["calendar"] = calendar_name(Calendar::ProlepticGregorian);
  j["packing"] = packing_json(index);
  const bool has_level =
      std::any_of(levels.begin(), levels.end(), [&](double l) { return std::abs(l - level_hpa) < 1e-6; });
  if (!has_level) {
    std::vector<std::string> found;
    for (double l : levels) found.push_back(number_text(l));
    throw DataError(path + ": no geopotential or geopotential height message at " + number_text(level_hpa) +
                    " hPa; the file's isobaric levels are " + join(found) + " hPa");
  }
  j["level"] = number_text(level_hpa) + " hPa";
  return j;
}

std::string describe_grib_text(const nlohmann::json& j) {
  std::ostringstream o;
  o << "  format      GRIB, edition";
  for (const auto& e : j["editions"]) o << " " << e.get<long>();
  o << "; " << j["messages"] << " height messages\n  parameters  ";
  bool first = true;
  for (const auto& p : j["parameters"]) {
    o << (first ? "" : "; ") << p["short_name"].get<std::string>() << " (paramId " << p["param_id"] << ") in "
      << p["units"].get<std::string>() << ", " << p["quantity"].get<std::string>();
    first = false;
  }
  o << "\n  level       " << j["level"].get<std::string>() << "; isobaric levels";
  for (const auto& l : j["levels_hpa"]) o << " " << number_text(l.get<double>());
  const auto& g = j["grid"];
  const auto& sc = g["scanning"];
  o << " hPa\n  grid        " << g["type"].get<std::string>() << ", " << g["ni"] << " x " << g["nj"]
    << " points (ni x nj); latitudes " << number_text(g["lat_first"].get<double>()) << " to " << number_text(g["lat_last"].get<double>())
    << ", longitudes " << number_text(g["lon_first"].get<double>()) << " to " << number_text(g["lon_last"].get<double>()) << "; scanning "
    << (sc["i_scans_negatively"].get<bool>() ? "westward" : "eastward") << ", "
    << (sc["j_scans_positively"].get<bool>() ? "northward" : "southward") << ", "
    << (sc["j_points_consecutive"].get<bool>() ? "column by column" : "row by row") << "\n";
  o << "  members     " << j["members"].size() << " (perturbation numbers";
  for (const auto& m : j["members"]) o << " " << m.get<long>();
  o << "; data types";
  for (const auto& d : j["data_types"]) o << " " << d.get<std::string>();
  const auto& in = j["initialisations"];
  o << ")\n  initialised ";
  if (in["count"].get<std::size_t>() == 1) o << in["first"].get<std::string>();
  else o << in["count"] << " times, " << in["first"].get<std::string>() << " to " << in["last"].get<std::string>();
  o << "\n  leads       " << j["leads_hours"].size() << ":";
  for (const auto& l : j["leads_hours"]) o << " " << number_text(l.get<double>());
  const auto& v = j["valid_times"];
  o << " h\n  valid       " << v["count"] << " times, " << v["first"].get<std::string>() << " to "
    << v["last"].get<std::string>() << ", at most " << v["per_day"] << " per day; calendar "
    << j["calendar"].get<std::string>() << "\n  packing    ";
  for (const auto& p : j["packing"])
    o << " " << p["type"].get<std::string>() << " at " << p["bits_per_value"] << " bits per value (" << p["messages"]
      << " messages)";
  o << "\n";
  return o.str();
}

}  // namespace isohypse::detail
