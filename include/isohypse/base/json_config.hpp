// Reading JSON configuration: a file parsed with a clear message, unknown
// keys refused by name (listing the valid ones), and typed values whose
// wrong type names the key. Every stage's config (derive, serve) uses these.
#pragma once

#include <nlohmann/json.hpp>
#include <set>
#include <string>
#include <vector>

#include "isohypse/base/error.hpp"

namespace isohypse {

// Parses a JSON file; InputError naming the file when it is missing or not JSON.
nlohmann::json read_json_file(const std::string& path);

// Throws InputError "WHERE: unknown key 'x' (valid keys: ...)".
void check_keys(const nlohmann::json& obj, const std::set<std::string>& valid, const std::string& where);

// Sets `out` from obj[key] when present; InputError naming the key on a wrong type.
template <class T>
void get_value(const nlohmann::json& obj, const char* key, T& out, const std::string& where) {
  if (!obj.contains(key)) return;
  try {
    out = obj.at(key).get<T>();
  } catch (const nlohmann::json::exception&) {
    throw InputError(where + ": key '" + key + "' has the wrong type (" + obj.at(key).dump() + ")");
  }
}

// A list of strings where a single string is also accepted ("inputs": "a/*.nc").
void get_string_list(const nlohmann::json& obj, const char* key, std::vector<std::string>& out,
                     const std::string& where);

}  // namespace isohypse
