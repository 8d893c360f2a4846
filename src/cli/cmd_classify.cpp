// isohypse classify: lagged-ensemble forecasts in, regime guidance out.
#include <filesystem>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <iostream>
#include <memory>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "isohypse/base/atomic_file.hpp"
#include "isohypse/io/regime_model_file.hpp"
#include "isohypse/stages/classify.hpp"
#include "isohypse/stages/guidance_csv.hpp"
#include "isohypse/stages/guidance_text.hpp"

namespace isohypse::cli {

namespace {

using Clock = std::chrono::steady_clock;

double seconds_since(Clock::time_point t) { return std::chrono::duration<double>(Clock::now() - t).count(); }

// The flags that are not settings of the stage: where to read the model and
// write the guidance, and what to print.
struct Outputs {
  std::string model, out, csv;
  bool quiet = false, timings = false;
};

// The stage's settings, bound straight to the config's fields; the ranges
// are checked by ClassifyConfig::validate.
void add_config_options(CLI::App* sub, ClassifyConfig& cfg) {
  sub->add_option("--forecasts", cfg.forecasts,
                  "Forecast files or quoted globs (one file per initialisation or per member)")
      ->required();
  sub->add_option("--reforecasts", cfg.reforecasts, "Reforecast files or globs: remove the model's drift with lead");
  sub->add_option("--analysis", cfg.analysis, "Analysis files or globs: the latest observed regime and its age");
  sub->add_option("--calibration", cfg.calibration,
                  "Calibration file (isohypse calibrate): calibrated probabilities as the headline, raw beside them");
  sub->add_option("--lag", cfg.lag, "Use the latest N initialisations up to the issue date (default: all)");
  add_weights_option(sub, cfg.weights);
  add_date_option(sub, "--issue-date", cfg.issue_date, "YYYY-MM-DD (default: the latest initialisation)");
  add_variable_option(sub, cfg.variable);
  add_windows_option(sub, cfg.windows);
  sub->add_option("--reforecast-window", cfg.reforecast_window_days, "Reforecasts within +-N days of the year")
      ->capture_default_str();
  sub->add_option("--lead-smoothing", cfg.lead_smoothing_days, "Running mean of the model climate in lead, days")
      ->capture_default_str();
  add_threads_option(sub, cfg.threads)->description("Threads reading and labelling members (default: every core)");
  sub->add_flag("--members", cfg.member_detail, "Include member-level assignments");
}

void add_output_options(CLI::App* sub, Outputs& o) {
  sub->add_option("--model", o.model, "Regime model file written by derive")->required();
  sub->add_option("--out", o.out, "Guidance JSON to write")->required();
  sub->add_option("--csv", o.csv, "Also write daily.csv and windows.csv into this folder");
  sub->add_flag("--quiet", o.quiet, "Print nothing but errors");
  sub->add_flag("--timings", o.timings, "Print where the time went (to standard error; for benchmarks)");
}

// The stage and its count, overwritten in place on standard error when it is a terminal.
ClassifyProgress terminal_progress(bool show) {
  if (!show) return {};
  return [](const std::string& stage, int done, int total) {
    std::cerr << "\r  " << stage;
    if (total > 0) std::cerr << " " << done << "/" << total;
    std::cerr << "          " << std::flush;
  };
}

// Seconds spent outside the library: reading the model, writing the outputs, the whole command.
struct CommandTimes {
  double model_s = 0, write_s = 0, total_s = 0;
};

void print_timings(const ClassifyTimings& tm, const CommandTimes& cmd, bool csv) {
  char line[160];
  std::cerr << "classify timings (s; the member rows are summed over threads):\n";
  auto row = [&](const std::string& what, double s) {
    std::snprintf(line, sizeof line, "  %-58s %8.3f\n", what.c_str(), s);
    std::cerr << line;
  };
  row("regime model (read and SHA-256)", cmd.model_s);
  row("scan: metadata of every forecast and reforecast file", tm.scan_s);
  row("references: climatology or reforecast model climate", tm.reference_s);
  row("members, on " + std::to_string(tm.threads) + " threads", tm.members_wall_s);
  const char* read_row = tm.grib_initialisations == 0 ? "  read with netCDF-C (one thread at a time)"
                         : tm.grib_initialisations == tm.initialisations
                             ? "  read and decoded with ecCodes (GRIB, on every thread)"
                             : "  read: netCDF-C (one thread at a time), ecCodes (GRIB)";
  row(read_row, tm.read_s);
  row("  unpacked to metres, daily means, regridding", tm.unpack_s);
  row("  anomalies, projection, nearest centroid", tm.label_s);
  row("statistics: probabilities, windows, persistence", tm.statistics_s);
  row("guidance document built", tm.document_s);
  row(csv ? "written (JSON and CSV)" : "written (JSON)", cmd.write_s);
  const double files = cmd.model_s + tm.scan_s + tm.read_s + tm.unpack_s;
  const double work = files + tm.reference_s + tm.label_s + tm.statistics_s + tm.document_s + cmd.write_s;
  std::snprintf(line, sizeof line, "  reading files (model, scan, read, unpack): %.0f %% of the %.3f s of work\n",
                100.0 * files / std::max(work, 1e-9), work);
  std::cerr << line;
  row("total", cmd.total_s);
}

void run_classify(const ClassifyConfig& cfg, const Outputs& o) {
  cfg.validate();  // a bad setting is refused before the model is read
  RunOutputs run;  // outputs checked against the inputs and for writability before any work
  run.input("--model", o.model);
  add_inputs(run, "--forecasts", cfg.forecasts);
  add_inputs(run, "--reforecasts", cfg.reforecasts);
  add_inputs(run, "--analysis", cfg.analysis);
  run.input("--calibration", cfg.calibration);
  run.output("--out", o.out);
  run.output_folder("--csv", o.csv, guidance_csv_names(!cfg.calibration.empty()));
  run.check();
  CommandTimes cmd;
  const auto t_start = Clock::now();
  const RegimeModel model = read_regime_model(o.model);
  cmd.model_s = seconds_since(t_start);
  const bool tty = ::isatty(STDERR_FILENO) && !o.quiet;
  ClassifyTimings tm;
  const nlohmann::json g = classify_forecasts(model, cfg, terminal_progress(tty), &tm);
  if (tty) std::cerr << "\r" << std::string(60, ' ') << "\r";
  const auto t_write = Clock::now();
  write_file_atomically(run.stage(o.out), g.dump(1) + "\n");
  if (!o.csv.empty())
    for (const auto& [name, text] : guidance_csv_files(g))
      write_file_atomically(run.stage((std::filesystem::path(o.csv) / name).string()), text);
  run.commit();
  cmd.write_s = seconds_since(t_write);
  cmd.total_s = seconds_since(t_start);
  if (o.timings) print_timings(tm, cmd, !o.csv.empty());
  if (!o.quiet) {
    std::cout << guidance_text(g) << "\nguidance written to " << o.out << "\n";
    if (!o.csv.empty())
      std::cout << "CSV written to " << o.csv << "/daily.csv and " << o.csv << "/windows.csv"
                << (cfg.calibration.empty() ? "" : " (calibrated), daily_raw.csv and windows_raw.csv (raw)") << "\n";
  }
}

}  // namespace

void add_classify(CLI::App& app) {
  auto cfg = std::make_shared<ClassifyConfig>();
  auto outputs = std::make_shared<Outputs>();
  CLI::App* sub = app.add_subcommand(
      "classify", "Classify lagged-ensemble forecasts onto the regimes: probabilities, persistence, transitions");
  add_output_options(sub, *outputs);
  add_config_options(sub, *cfg);
  sub->callback([cfg, outputs] { run_classify(*cfg, *outputs); });
}

}  // namespace isohypse::cli
