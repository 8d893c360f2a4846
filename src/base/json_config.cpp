#include "isohypse/base/json_config.hpp"

#include "isohypse/base/atomic_file.hpp"

namespace isohypse {

nlohmann::json read_json_file(const std::string& path) {
  std::string text = read_file(path);
  try {
    return nlohmann::json::parse(text);
  } catch (const nlohmann::json::parse_error& e) {
    throw InputError(path + ": not valid JSON: " + e.what());
  }
}

void check_keys(const nlohmann::json& obj, const std::set<std::string>& valid, const std::string& where) {
  if (!obj.is_object()) throw InputError(where + ": expected a JSON object");
  for (const auto& [key, value] : obj.items()) {
    if (valid.count(key)) continue;
    std::string list;
    for (const auto& v : valid) list += (list.empty() ? "" : ", ") + v;
    throw InputError(where + ": unknown key '" + key + "' (valid keys: " + list + ")");
  }
}

void get_string_list(const nlohmann::json& obj, const char* key, std::vector<std::string>& out,
                     const std::string& where) {
  if (obj.contains(key) && obj.at(key).is_string()) out = {obj.at(key).get<std::string>()};
  else get_value(obj, key, out, where);
}

}  // namespace isohypse
