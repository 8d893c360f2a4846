// isohypse derive: reanalysis heights in, a regime model out.
#include <spdlog/spdlog.h>
#include <unistd.h>

#include <cstdint>
#include <functional>
#include <iostream>
#include <optional>
#include <sstream>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/json_config.hpp"
#include "isohypse/io/regime_model_file.hpp"
#include "isohypse/stages/derive.hpp"

namespace isohypse::cli {

namespace {

// "11,12,1": whole numbers; whether they are months DeriveConfig::validate
// decides.
std::vector<int> parse_months(const std::string& text) {
  std::vector<int> out;
  std::stringstream ss(text);
  std::string item;
  while (std::getline(ss, item, ',')) {
    try {
      std::size_t used = 0;
      out.push_back(std::stoi(item, &used));
      if (used != item.size()) throw std::invalid_argument(item);
    } catch (const std::exception&) {
      throw InputError("--months: '" + item + "' is not a month number 1..12 (e.g. --months 11,12,1,2,3)");
    }
  }
  return out;
}

// "auto" or a whole number; its range DeriveConfig::validate checks.
std::optional<int> parse_k(const std::string& text) {
  if (text == "auto") return std::nullopt;
  try {
    std::size_t used = 0;
    const int k = std::stoi(text, &used);
    if (used != text.size()) throw std::invalid_argument(text);
    return k;
  } catch (const std::exception&) {
    throw InputError("--k: '" + text + "' is not a whole number or 'auto'");
  }
}

// A seed: a whole number 0 .. 2^64 - 1 (std::stoull alone would wrap "-5"
// around).
std::uint64_t parse_seed(const std::string& text) {
  try {
    std::size_t used = 0;
    if (text.empty() || text.find_first_not_of("0123456789") != std::string::npos) throw std::invalid_argument(text);
    const std::uint64_t seed = std::stoull(text, &used);
    if (used != text.size()) throw std::invalid_argument(text);
    return seed;
  } catch (const std::exception&) {
    throw InputError("--seed: '" + text + "' is not a whole number 0.." + std::to_string(UINT64_MAX));
  }
}

// The flags of derive as given; each overrides the config only when given.
struct Flags {
  std::string config, out, summary, domain, months, k, variable, seed;
  std::vector<std::string> inputs;
  double level = 0;
  int threads = 0;
  bool daily_mean = false, dry_run = false;
  CLI::Option *level_given = nullptr, *threads_given = nullptr;
};

void add_flags(CLI::App* sub, Flags& a) {
  sub->add_option("--config", a.config, "JSON config (see config/derive-example.json); flags override it");
  sub->add_option("--out", a.out, "Regime model file to write (NetCDF-4)")->required();
  sub->add_option("--input", a.inputs, "Input file (NetCDF or GRIB) or quoted glob, repeatable (e.g. 'reanalysis/hgt500_*.nc')");
  add_variable_option(sub, a.variable);
  a.level_given = sub->add_option("--level", a.level, "Pressure level in hPa (default 500)");
  sub->add_option("--domain", a.domain,
                  "LAT_MIN,LAT_MAX,LON_WEST,LON_EAST, eastward from LON_WEST (20,80,170,-40 crosses the dateline)");
  sub->add_option("--months", a.months, "Season months (default 11,12,1,2,3)");
  sub->add_option("--k", a.k, "Number of regimes, or 'auto' to choose it from the classifiability table");
  sub->add_option("--seed", a.seed,
                  "Random seed of k-means, the classifiability table and the randomized EOFs (default " +
                      std::to_string(kDefaultSeed) + ")");
  a.threads_given = add_threads_option(sub, a.threads);
  sub->add_option("--summary", a.summary, "Also write the summary table as JSON to this file");
  sub->add_flag("--daily-mean", a.daily_mean, "Average sub-daily steps (6-hourly, hourly) to daily means");
  sub->add_flag("--dry-run", a.dry_run, "Print the plan and the settings, then stop");
}

// The config file's settings with the given flags over them, validated.
DeriveConfig settings(const Flags& a) {
  DeriveConfig cfg;
  if (!a.config.empty()) cfg = DeriveConfig::from_json(read_json_file(a.config), a.config);
  if (!a.inputs.empty()) cfg.inputs = a.inputs;
  if (!a.variable.empty()) cfg.variable = a.variable;
  if (*a.level_given) cfg.level_hpa = a.level;
  if (!a.domain.empty()) cfg.domain = Domain::parse(a.domain, "--domain");
  if (!a.months.empty()) cfg.months = parse_months(a.months);
  if (!a.k.empty()) cfg.k = parse_k(a.k);
  if (!a.seed.empty()) cfg.seed = parse_seed(a.seed);
  if (*a.threads_given) cfg.threads = a.threads;
  if (a.daily_mean) cfg.daily_mean = true;
  cfg.validate();
  return cfg;
}

void print_plan(const DeriveConfig& cfg, const std::string& out) {
  std::cout << "plan: read | climatology (" << cfg.climatology.harmonics << " harmonics"
            << (cfg.climatology.detrend ? ", detrended" : "") << ") | anomalies"
            << (cfg.running_mean_days > 1 ? " | running mean " + std::to_string(cfg.running_mean_days) + " d" : "")
            << " | season | sqrt(cos lat) weights | EOFs | classifiability k=" << cfg.k_min << ".." << cfg.k_max
            << " | k-means (" << cfg.restarts << " restarts) | patterns | labels | persistence, transitions | write "
            << out << "\nsettings: " << cfg.to_json().dump(2) << "\n";
}

// Progress on standard error: one rewritten line per stage on a terminal,
// one line per stage otherwise.
class ProgressLine {
public:
  ProgressLine() : tty_(::isatty(STDERR_FILENO)) {}
  void operator()(const std::string& stage, int done, int total) {
    if (stage != last_stage_) {
      if (tty_ && !last_stage_.empty()) std::cerr << "\n";
      last_stage_ = stage;
      if (!tty_) std::cerr << "isohypse derive: " << stage << "...\n";
    }
    if (tty_) {
      std::cerr << "\r  " << stage;
      if (total > 0) std::cerr << " " << done << "/" << total;
      std::cerr << "   " << std::flush;
    }
  }
  void end() const {
    if (tty_) std::cerr << "\n";
  }

private:
  bool tty_;
  std::string last_stage_;
};

}  // namespace

void add_derive(CLI::App& app) {
  auto a = std::make_shared<Flags>();
  CLI::App* sub = app.add_subcommand(
      "derive", "Derive circulation regimes from reanalysis 500 hPa heights into a regime model file");
  add_flags(sub, *a);
  sub->callback([a] {
    const DeriveConfig cfg = settings(*a);
    if (a->dry_run) {
      print_plan(cfg, a->out);
      return;
    }
    RunOutputs run;  // outputs checked against the inputs and for writability before any work
    run.input("--config", a->config);
    add_inputs(run, "--input", cfg.inputs);
    run.output("--out", a->out);
    run.output("--summary", a->summary);
    run.check();
    ProgressLine line;
    RegimeModel model = derive_regimes(cfg, std::ref(line));
    line.end();
    write_regime_model(model, run.stage(a->out));
    if (!a->summary.empty()) write_file_atomically(run.stage(a->summary), model_summary(model).dump(2) + "\n");
    run.commit();
    std::cout << summary_text(model) << "\nregime model written to " << a->out << "\n";
    if (!a->summary.empty()) std::cout << "summary written to " << a->summary << "\n";
  });
}

}  // namespace isohypse::cli
