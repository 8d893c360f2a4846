#include "stages/derive/provenance.hpp"

#include <filesystem>

#include "isohypse/base/vocabulary.hpp"

namespace isohypse::derive_steps {

namespace {

using json = nlohmann::json;

json input_files(const std::vector<std::string>& paths) {
  json inputs = json::array();
  for (const auto& p : paths) {
    std::error_code ec;
    auto size = std::filesystem::file_size(p, ec);
    inputs.push_back({{"path", std::filesystem::absolute(p).string()}, {"bytes", ec ? 0 : size}});
  }
  return inputs;
}

}  // namespace

json derive_provenance(const Record& record, const Season& season, const EofResult& eof, const KMeansResult& km,
                       const DeriveConfig& cfg, const json& timings) {
  const std::vector<Date>& dates = record.field.dates;
  return {{"tool", "isohypse"},
          {"version", ISOHYPSE_VERSION},
          {"created", utc_timestamp_now()},
          {"inputs", input_files(record.paths)},
          {"record", {{"first", to_string(dates.front())},
                      {"last", to_string(dates.back())},
                      {"days", dates.size()},
                      {"season_days", season.size()},
                      {"missing_days", record.report.missing_days},
                      {"missing_values", record.report.missing_values}}},
          {"seed", cfg.seed},
          {"eof_method", eof.method},
          {"kmeans", {{"restarts", cfg.restarts}, {"best_restart", km.best_restart},
                      {"iterations", km.iterations}, {"inertia", km.inertia}}},
          {"timings_s", timings}};
}

}  // namespace isohypse::derive_steps
