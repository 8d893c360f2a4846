// The guidance as CSV for impact models: the daily probabilities and the
// window dominance and expected days, one column per state.
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <utility>
#include <vector>

namespace isohypse {

// Writes DIR/daily.csv (valid_date, lead_days, then the probability of each
// state) and DIR/windows.csv (first_lead_days, last_lead_days, from, to, then
// p_dominant_STATE and expected_days_STATE for each state, then members,
// member_weight and initialisations: the members counted for dominance, the
// sum of their weights and the initialisations they come from), each atomically;
// a missing value (JSON null) is an empty field. When the guidance is
// calibrated (its "calibration" says applied), these hold the calibrated
// (headline) values and DIR/daily_raw.csv and DIR/windows_raw.csv the raw
// ones, with the same columns. Creates DIR. `guidance` is a
// document from classify_forecasts. Throws InputError when DIR cannot be
// created or a file cannot be written.
void write_guidance_csv(const nlohmann::json& guidance, const std::string& dir);
// The names of those files: daily.csv and windows.csv, and with
// `calibrated` daily_raw.csv and windows_raw.csv.
std::vector<std::string> guidance_csv_names(bool calibrated);
// The same tables, each file name with its text (every table is made before
// any is returned: a malformed document throws and gives none).
std::vector<std::pair<std::string, std::string>> guidance_csv_files(const nlohmann::json& guidance);

}  // namespace isohypse
