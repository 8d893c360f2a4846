// isohypse inspect FILE...: describe what a file holds, the first command a
// user runs on a file they were sent.
#include <nlohmann/json.hpp>

#include <iostream>

#include "cli/commands.hpp"
#include "isohypse/io/calibration_file.hpp"
#include "isohypse/io/regime_model_file.hpp"
#include "isohypse/stages/calibrate.hpp"
#include "isohypse/io/dataset.hpp"
#include "isohypse/stages/derive.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/inspect.hpp"
#include "isohypse/io/reader.hpp"
#include "isohypse/numerics/regime_model.hpp"

namespace isohypse::cli {

void add_inspect(CLI::App& app) {
  struct Args {
    std::vector<std::string> files;
    std::string variable;
    double level = 500.0;
    bool json = false;
  };
  auto args = std::make_shared<Args>();
  CLI::App* sub = app.add_subcommand(
      "inspect", "Describe height files, NetCDF or GRIB (variables, grid, levels, time, packing, gaps), a regime model or a calibration");
  sub->add_option("files", args->files, "Files or quoted globs (e.g. 'data/hgt500_*.nc')")->required();
  sub->add_option("--variable", args->variable, "Height variable to describe (default: found automatically)");
  sub->add_option("--level", args->level, "Pressure level in hPa")->capture_default_str();
  sub->add_flag("--json", args->json, "Print JSON instead of text");
  sub->callback([args] {
    std::vector<std::string> paths = expand_paths(args->files);
    nlohmann::json all = nlohmann::json::array();
    int failures = 0;
    nlohmann::json last_failure;
    for (const std::string& p : paths) {
      if (is_regime_model(p)) {  // the summary derive printed, with the model's identity
        nlohmann::json j;
        try {
          RegimeModel m = read_regime_model(p);
          j = model_summary(m);
          j["kind"] = "regime model";
          j["path"] = p;
          j["sha256"] = m.sha256;
          if (!args->json)
            std::cout << p << ": isohypse regime model, format version " << m.format_version << ", SHA-256 "
                      << m.sha256 << "\n"
                      << summary_text(m) << "\n";
        } catch (const Error& ex) {
          j = {{"path", p}, {"kind", "regime model"}, {"error", ex.what()}, {"error_kind", "data"}};
          ++failures;
          last_failure = j;
          if (!args->json && paths.size() > 1) std::cout << p << ": " << ex.what() << "\n\n";
        }
        if (args->json) all.push_back(j);
        continue;
      }
      if (is_calibration_file(p)) {
        nlohmann::json j;
        try {
          const Calibration c = read_calibration(p);
          j = calibration_summary(c);
          if (!args->json)
            std::cout << p << ": isohypse calibration, format version " << c.format_version << ", SHA-256 "
                      << c.sha256 << "\n  for the regime model " << c.model_file << " (SHA-256 " << c.model_sha256
                      << ")\n  forecast system: " << c.forecast_grid << ", " << c.calendar << " calendar; fitted "
                      << c.created << " on " << c.observed << "\n"
                      << calibration_text(c) << "\n";
        } catch (const Error& ex) {
          j = {{"path", p}, {"kind", "calibration"}, {"error", ex.what()}, {"error_kind", "data"}};
          ++failures;
          last_failure = j;
          if (!args->json && paths.size() > 1) std::cout << p << ": " << ex.what() << "\n\n";
        }
        if (args->json) all.push_back(j);
        continue;
      }
      nlohmann::json j = describe_file(p, args->variable, args->level);
      if (j.contains("error")) {
        ++failures;
        last_failure = j;
      }
      if (args->json) all.push_back(j);
      else if (!j.contains("error") || paths.size() > 1 || j.contains("values_problem"))
        std::cout << describe_text(j) << "\n";
    }
    if (args->json) std::cout << (paths.size() == 1 ? all[0] : all).dump(2) << "\n";
    if (failures == 1 && paths.size() == 1) {
      std::string msg = last_failure["error"];
      if (last_failure["error_kind"] == "input") throw InputError(msg);
      throw DataError(msg);
    }
    if (failures) throw DataError(std::to_string(failures) + " of " + std::to_string(paths.size()) +
                                  " files cannot be used (see above)");
  });
}

}  // namespace isohypse::cli
