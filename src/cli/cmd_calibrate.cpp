// isohypse calibrate: reforecasts in, a calibration of the regime probabilities out.
#include <unistd.h>

#include <cstdio>
#include <iostream>
#include <memory>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "isohypse/io/calibration_file.hpp"
#include "isohypse/io/regime_model_file.hpp"
#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/stopwatch.hpp"
#include "isohypse/stages/calibrate.hpp"

namespace isohypse::cli {

namespace {

struct Outputs {
  std::string model, out, cases, method = "blend";
  bool quiet = false, timings = false;
};

void add_config_options(CLI::App* sub, CalibrateConfig& cfg, Outputs& o) {
  sub->add_option("--reforecasts", cfg.reforecasts, "Reforecast files or quoted globs")->required();
  sub->add_option("--observed", cfg.observed,
                  "Analysis or reanalysis files covering the reforecast dates (default: the model's own record)");
  sub->add_option("--lag", cfg.lag, "The daily lag the guidance uses, in initialisations")->capture_default_str();
  sub->add_option("--lag-days", cfg.lag_days,
                  "Pool reforecasts initialised up to N days before each (default: lag - 1, widened to hold two)");
  add_weights_option(sub, cfg.weights);
  sub->add_option("--method", o.method, "blend (with climatology, the default), logistic, or auto (per window the better of the two, cross-validated)")->capture_default_str();
  add_windows_option(sub, cfg.windows);
  add_variable_option(sub, cfg.variable);
  sub->add_option("--reforecast-window", cfg.reforecast_window_days, "The drift: reforecasts within +-N days of the year")
      ->capture_default_str();
  sub->add_option("--lead-smoothing", cfg.lead_smoothing_days, "Running mean of the drift in lead, days")
      ->capture_default_str();
  sub->add_option("--coefficient-smoothing", cfg.coefficient_smoothing_days,
                  "Running mean of the blend coefficient in lead, days")
      ->capture_default_str();
  sub->add_option("--shrinkage", cfg.shrinkage_z,
                  "Blend: shrink a(L) towards 0 by max(0, 1 - (Z SE / a)^2), SE its jackknife error over years; 0 = none")
      ->capture_default_str();
  sub->add_option("--penalty-c", cfg.penalty_c, "Logistic: inverse L2 penalty (as scikit-learn's C)")
      ->capture_default_str();
  sub->add_option("--held-fields-memory", cfg.held_fields_mb,
                  "MB of reforecast fields held between their read and their labels; beyond it they are read again")
      ->capture_default_str();
  add_threads_option(sub, cfg.threads)->description("Threads reading and labelling reforecasts (default: every core)");
}

CalibrateProgress terminal_progress(bool show) {
  if (!show) return {};
  return [](const std::string& stage, int done, int total) {
    std::cerr << "\r  " << stage;
    if (total > 0) std::cerr << " " << done << "/" << total;
    std::cerr << "          " << std::flush;
  };
}

void print_timings(const CalibrateTimings& t, double model_s, double write_s) {
  std::fprintf(stderr,
               "calibrate timings (s): model %.3f | scan and observed %.3f | read, drift and labels on %d threads %.3f "
               "(netCDF-C reads %.3f, decoding %.3f, summed over threads) | cases %.3f | fit and cross-validation %.3f | written %.3f "
               "| total %.3f\n",
               model_s, t.scan_s, t.threads, t.label_s, t.read_s, t.decode_s, t.cases_s, t.fit_s, write_s,
               model_s + t.total_s + write_s);
}

void run_calibrate(CalibrateConfig cfg, const Outputs& o) {
  cfg.method = parse_calibration_method(o.method);
  cfg.model_file = o.model;
  cfg.validate();
  RunOutputs run;  // outputs checked against the inputs and for writability before any work
  run.input("--model", o.model);
  add_inputs(run, "--reforecasts", cfg.reforecasts);
  add_inputs(run, "--observed", cfg.observed);
  run.output("--out", o.out);
  run.output("--cases", o.cases);
  run.check();
  Stopwatch clock;
  const RegimeModel model = read_regime_model(o.model);
  const double model_s = clock.lap();
  const bool tty = ::isatty(STDERR_FILENO) && !o.quiet;
  CalibrateTimings t;
  std::string cases;
  const Calibration c = calibrate_reforecasts(model, cfg, terminal_progress(tty), &t, o.cases.empty() ? nullptr : &cases);
  if (tty) std::cerr << "\r" << std::string(60, ' ') << "\r";
  clock.lap();
  write_calibration(c, run.stage(o.out));
  if (!o.cases.empty()) write_file_atomically(run.stage(o.cases), cases);
  run.commit();
  const double write_s = clock.lap();
  if (o.timings) print_timings(t, model_s, write_s);
  if (!o.quiet) {
    std::cout << calibration_text(c) << "calibration written to " << o.out << "\n";
    if (!o.cases.empty()) std::cout << "cases (raw, cross-validated calibrated, climatology) written to " << o.cases << "\n";
  }
}

}  // namespace

void add_calibrate(CLI::App& app) {
  auto cfg = std::make_shared<CalibrateConfig>();
  auto outputs = std::make_shared<Outputs>();
  CLI::App* sub = app.add_subcommand(
      "calibrate", "Fit a calibration of the regime probabilities on reforecasts, cross-validated by year");
  sub->add_option("--model", outputs->model, "Regime model file written by derive")->required();
  sub->add_option("--out", outputs->out, "Calibration file to write (NetCDF-4)")->required();
  sub->add_option("--cases", outputs->cases, "Also write every case (raw, cross-validated calibrated, climatology) as CSV");
  add_config_options(sub, *cfg, *outputs);
  sub->add_flag("--quiet", outputs->quiet, "Print nothing but errors");
  sub->add_flag("--timings", outputs->timings, "Print where the time went (to standard error)");
  sub->callback([cfg, outputs] { run_calibrate(*cfg, *outputs); });
}

}  // namespace isohypse::cli
