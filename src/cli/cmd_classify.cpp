// isohypse classify: lagged-ensemble forecasts in, regime guidance out.
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <iostream>

#include "cli/commands.hpp"
#include "isohypse/io/regime_model_file.hpp"
#include "isohypse/base/atomic_file.hpp"
#include "isohypse/stages/classify.hpp"
#include "isohypse/stages/guidance_csv.hpp"
#include "isohypse/stages/guidance_text.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse::cli {

void add_classify(CLI::App& app) {
  struct Args {
    std::string model, out, weights = "equal", issue, csv, windows;
    std::vector<std::string> forecasts, reforecasts, analysis;
    std::string variable;
    int lag = 0, refc_window = 7, smoothing = 5, threads = 0;
    bool members = false, quiet = false, timings = false;
  };
  auto a = std::make_shared<Args>();
  CLI::App* sub = app.add_subcommand(
      "classify", "Classify lagged-ensemble forecasts onto the regimes: probabilities, persistence, transitions");
  sub->add_option("--model", a->model, "Regime model file written by derive")->required();
  sub->add_option("--forecasts", a->forecasts, "Forecast files or quoted globs (one file per initialisation or per member)")
      ->required();
  sub->add_option("--out", a->out, "Guidance JSON to write")->required();
  sub->add_option("--reforecasts", a->reforecasts, "Reforecast files or globs: remove the model's drift with lead");
  sub->add_option("--analysis", a->analysis, "Analysis files or globs: the latest observed regime and its age");
  sub->add_option("--lag", a->lag, "Use the latest N initialisations up to the issue date (default: all)");
  sub->add_option("--weights", a->weights, "equal | linear | exp:DAYS (decay with the age of the initialisation)")
      ->capture_default_str();
  sub->add_option("--issue-date", a->issue, "YYYY-MM-DD (default: the latest initialisation)");
  sub->add_option("--variable", a->variable, "Height variable name (default: found automatically)");
  sub->add_option("--windows", a->windows, "Lead-day windows (default 1-3,4-7,8-14,15-28,29-45)");
  sub->add_option("--reforecast-window", a->refc_window, "Reforecasts within +-N days of the year")->capture_default_str();
  sub->add_option("--lead-smoothing", a->smoothing, "Running mean of the model climate in lead, days")
      ->capture_default_str();
  sub->add_option("--threads", a->threads, "Threads reading and labelling members (default: every core)");
  sub->add_option("--csv", a->csv, "Also write daily.csv and windows.csv into this folder");
  sub->add_flag("--members", a->members, "Include member-level assignments");
  sub->add_flag("--quiet", a->quiet, "Print nothing but errors");
  sub->add_flag("--timings", a->timings, "Print where the time went (to standard error; for benchmarks)");
  sub->callback([a] {
    ClassifyConfig cfg;
    cfg.forecasts = a->forecasts;
    cfg.reforecasts = a->reforecasts;
    cfg.analysis = a->analysis;
    cfg.variable = a->variable;
    if (a->lag < 0) throw InputError("--lag must be 0 (all) or positive");
    cfg.lag = a->lag;
    cfg.weights = Weighting::parse(a->weights);
    if (!a->issue.empty()) cfg.issue_date = parse_date(a->issue, Calendar::ProlepticGregorian, "--issue-date");
    if (!a->windows.empty()) cfg.windows = parse_windows(a->windows);
    if (a->refc_window < 0 || a->refc_window > 60) throw InputError("--reforecast-window must lie in 0..60 days");
    if (a->smoothing < 0 || a->smoothing > 15) throw InputError("--lead-smoothing must lie in 0..15 days");
    cfg.reforecast_window_days = a->refc_window;
    cfg.lead_smoothing_days = a->smoothing;
    cfg.member_detail = a->members;
    if (a->threads < 0) throw InputError("--threads must be 0 (every core) or positive");
    cfg.threads = a->threads;
    using Clock = std::chrono::steady_clock;
    auto since = [](Clock::time_point t) { return std::chrono::duration<double>(Clock::now() - t).count(); };
    const auto t_start = Clock::now();
    RegimeModel model = read_regime_model(a->model);
    const double model_s = since(t_start);
    const bool tty = ::isatty(STDERR_FILENO) && !a->quiet;
    auto progress = [&](const std::string& stage, int done, int total) {
      if (!tty) return;
      std::cerr << "\r  " << stage;
      if (total > 0) std::cerr << " " << done << "/" << total;
      std::cerr << "          " << std::flush;
    };
    ClassifyTimings tm;
    nlohmann::json g = classify_forecasts(model, cfg, progress, &tm);
    if (tty) std::cerr << "\r" << std::string(60, ' ') << "\r";
    const auto t_write = Clock::now();
    write_file_atomically(a->out, g.dump(1) + "\n");
    if (!a->csv.empty()) write_guidance_csv(g, a->csv);
    if (a->timings) {
      const double write_s = since(t_write);
      char line[160];
      std::cerr << "classify timings (s; the member rows are summed over threads):\n";
      auto row = [&](const char* what, double s) {
        std::snprintf(line, sizeof line, "  %-58s %8.3f\n", what, s);
        std::cerr << line;
      };
      row("regime model (read and SHA-256)", model_s);
      row("scan: metadata of every forecast and reforecast file", tm.scan_s);
      row("references: climatology or reforecast model climate", tm.reference_s);
      row(("members, on " + std::to_string(tm.threads) + " threads").c_str(), tm.members_wall_s);
      row("  read with netCDF-C (one thread at a time)", tm.read_s);
      row("  unpacked to metres, daily means, regridding", tm.unpack_s);
      row("  anomalies, projection, nearest centroid", tm.label_s);
      row("statistics: probabilities, windows, persistence", tm.statistics_s);
      row("guidance document built", tm.document_s);
      row(a->csv.empty() ? "written (JSON)" : "written (JSON and CSV)", write_s);
      const double files = model_s + tm.scan_s + tm.read_s + tm.unpack_s;
      const double work = files + tm.reference_s + tm.label_s + tm.statistics_s + tm.document_s + write_s;
      std::snprintf(line, sizeof line, "  reading files (model, scan, read, unpack): %.0f %% of the %.3f s of work\n",
                    100.0 * files / std::max(work, 1e-9), work);
      std::cerr << line;
      row("total", since(t_start));
    }
    if (!a->quiet) {
      std::cout << guidance_text(g) << "\nguidance written to " << a->out << "\n";
      if (!a->csv.empty()) std::cout << "CSV written to " << a->csv << "/daily.csv and " << a->csv << "/windows.csv\n";
    }
  });
}

}  // namespace isohypse::cli
