// A description of a height file for `isohypse inspect`: candidate variables,
// units, grid, levels, time span, calendar, steps, missing dates, packing and
// the count of fill values in the chosen variable.
#pragma once

#include <nlohmann/json.hpp>
#include <string>

namespace isohypse {

// Never throws for a bad file: the JSON then has "error" (the message) and
// whatever could be read (e.g. the candidate variables).
nlohmann::json describe_file(const std::string& path, const std::string& variable = "", double level_hpa = 500.0);
// The same as readable text, a few lines per file.
std::string describe_text(const nlohmann::json& description);

}  // namespace isohypse
