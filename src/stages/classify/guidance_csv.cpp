#include "isohypse/stages/guidance_csv.hpp"

#include <filesystem>
#include <sstream>
#include <utility>
#include <vector>

#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

using json = nlohmann::json;

// A number with 6 significant digits; null is an empty field.
std::string csv_number(const json& v) {
  if (v.is_null()) return std::string();
  std::ostringstream o;
  o.precision(6);
  o << v.get<double>();
  return o.str();
}

// prefix: "" for the headline probabilities, "raw_" for the raw ones of a calibrated guidance.
std::string daily_csv(const json& g, const std::string& prefix) {
  const json& states = g.at("states");
  std::ostringstream d;
  d << "valid_date,lead_days";
  for (const auto& s : states) d << "," << s.get<std::string>();
  d << "\n";
  for (const auto& e : g.at("daily")) {
    d << e.at("valid_date").get<std::string>() << "," << e.at("lead_days").get<int>();
    for (const auto& s : states) d << "," << csv_number(e.at(prefix + "probabilities").at(s.get<std::string>()));
    d << "\n";
  }
  return d.str();
}

std::string windows_csv(const json& g, const std::string& prefix) {
  const json& states = g.at("states");
  std::ostringstream w;
  w << "first_lead_days,last_lead_days,from,to";
  for (const auto& s : states) w << ",p_dominant_" << s.get<std::string>();
  for (const auto& s : states) w << ",expected_days_" << s.get<std::string>();
  w << ",members,member_weight,initialisations\n";
  for (const auto& e : g.at("windows")) {
    w << e.at("first_lead_days").get<int>() << "," << e.at("last_lead_days").get<int>() << ","
      << e.at("from").get<std::string>() << "," << e.at("to").get<std::string>();
    for (const auto& s : states) w << "," << csv_number(e.at(prefix + "dominance").at(s.get<std::string>()));
    for (const auto& s : states) w << "," << csv_number(e.at(prefix + "expected_days").at(s.get<std::string>()));
    w << "," << e.at("members").get<int>() << "," << csv_number(e.at("member_weight")) << ","
      << e.at("initialisations").get<int>() << "\n";
  }
  return w.str();
}

}  // namespace

std::vector<std::string> guidance_csv_names(bool calibrated) {
  std::vector<std::string> names = {"daily.csv", "windows.csv"};
  if (calibrated) names.insert(names.end(), {"daily_raw.csv", "windows_raw.csv"});
  return names;
}

std::vector<std::pair<std::string, std::string>> guidance_csv_files(const json& g) {
  const bool calibrated = g.contains("calibration") && g.at("calibration").value("applied", false);
  const std::vector<std::string> names = guidance_csv_names(calibrated);
  std::vector<std::pair<std::string, std::string>> files = {{names[0], daily_csv(g, "")},
                                                            {names[1], windows_csv(g, "")}};
  if (calibrated) {
    files.emplace_back(names[2], daily_csv(g, "raw_"));
    files.emplace_back(names[3], windows_csv(g, "raw_"));
  }
  return files;
}

void write_guidance_csv(const json& g, const std::string& dir) {
  // Every table is made before any is written: a malformed document leaves no file.
  const auto files = guidance_csv_files(g);
  std::error_code ec;
  std::filesystem::create_directories(dir, ec);
  if (ec) throw InputError(dir + ": cannot create the folder: " + ec.message());
  for (const auto& [name, text] : files) write_file_atomically((std::filesystem::path(dir) / name).string(), text);
}

}  // namespace isohypse
