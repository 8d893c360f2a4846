// isohypse derive: reanalysis heights in, a regime model out.
#include <spdlog/spdlog.h>
#include <unistd.h>

#include <iostream>
#include <sstream>

#include "cli/commands.hpp"
#include "isohypse/io/regime_model_file.hpp"
#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/json_config.hpp"
#include "isohypse/stages/derive.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse::cli {

namespace {

std::vector<int> parse_months(const std::string& text) {
  std::vector<int> out;
  std::stringstream ss(text);
  std::string item;
  while (std::getline(ss, item, ',')) {
    try {
      std::size_t used = 0;
      int m = std::stoi(item, &used);
      if (used != item.size() || m < 1 || m > 12) throw std::invalid_argument(item);
      out.push_back(m);
    } catch (const std::exception&) {
      throw InputError("--months: '" + item + "' is not a month number 1..12 (e.g. --months 11,12,1,2,3)");
    }
  }
  return out;
}

}  // namespace

void add_derive(CLI::App& app) {
  struct Args {
    std::string config, out, summary, domain, months, k, variable;
    std::vector<std::string> inputs;
    double level = 0;
    long long seed = -1;
    int threads = -1;
    bool daily_mean = false, dry_run = false;
  };
  auto a = std::make_shared<Args>();
  CLI::App* sub = app.add_subcommand(
      "derive", "Derive circulation regimes from reanalysis 500 hPa heights into a regime model file");
  sub->add_option("--config", a->config, "JSON config (see config/derive-example.json); flags override it");
  sub->add_option("--out", a->out, "Regime model file to write (NetCDF-4)")->required();
  sub->add_option("--input", a->inputs, "Input file or quoted glob, repeatable (e.g. 'reanalysis/hgt500_*.nc')");
  sub->add_option("--variable", a->variable, "Height variable name (default: found automatically)");
  sub->add_option("--level", a->level, "Pressure level in hPa (default 500)");
  sub->add_option("--domain", a->domain,
                  "LAT_MIN,LAT_MAX,LON_WEST,LON_EAST, eastward from LON_WEST (20,80,170,-40 crosses the dateline)");
  sub->add_option("--months", a->months, "Season months (default 11,12,1,2,3)");
  sub->add_option("--k", a->k, "Number of regimes, or 'auto' to choose it from the classifiability table");
  sub->add_option("--seed", a->seed, "Random seed (default 20261202)");
  sub->add_option("--threads", a->threads, "Threads (default: all cores)");
  sub->add_option("--summary", a->summary, "Also write the summary table as JSON to this file");
  sub->add_flag("--daily-mean", a->daily_mean, "Average sub-daily steps (6-hourly, hourly) to daily means");
  sub->add_flag("--dry-run", a->dry_run, "Print the plan and the settings, then stop");
  sub->callback([a] {
    DeriveConfig cfg;
    if (!a->config.empty()) {
      nlohmann::json j = read_json_file(a->config);
      cfg = DeriveConfig::from_json(j, a->config);
    }
    if (!a->inputs.empty()) cfg.inputs = a->inputs;
    if (!a->variable.empty()) cfg.variable = a->variable;
    if (a->level > 0) cfg.level_hpa = a->level;
    if (!a->domain.empty()) cfg.domain = Domain::parse(a->domain, "--domain");
    if (!a->months.empty()) cfg.months = parse_months(a->months);
    if (!a->k.empty()) {
      if (a->k == "auto") cfg.k.reset();
      else {
        try {
          std::size_t used = 0;
          cfg.k = std::stoi(a->k, &used);
          if (used != a->k.size()) throw std::invalid_argument(a->k);
        } catch (const std::exception&) {
          throw InputError("--k: '" + a->k + "' is not a whole number or 'auto'");
        }
      }
    }
    if (a->seed >= 0) cfg.seed = static_cast<std::uint64_t>(a->seed);
    if (a->threads >= 0) cfg.threads = a->threads;
    if (a->daily_mean) cfg.daily_mean = true;
    cfg.validate();
    if (a->dry_run) {
      std::cout << "plan: read | climatology (" << cfg.climatology.harmonics << " harmonics"
                << (cfg.climatology.detrend ? ", detrended" : "") << ") | anomalies"
                << (cfg.running_mean_days > 1 ? " | running mean " + std::to_string(cfg.running_mean_days) + " d" : "")
                << " | season | sqrt(cos lat) weights | EOFs | classifiability k=" << cfg.k_min << ".." << cfg.k_max
                << " | k-means (" << cfg.restarts << " restarts) | patterns | labels | persistence, transitions | write "
                << a->out << "\nsettings: " << cfg.to_json().dump(2) << "\n";
      return;
    }
    const bool tty = ::isatty(STDERR_FILENO);
    std::string last_stage;
    auto progress = [&](const std::string& stage, int done, int total) {
      if (stage != last_stage) {
        if (tty && !last_stage.empty()) std::cerr << "\n";
        last_stage = stage;
        if (!tty) std::cerr << "isohypse derive: " << stage << "...\n";
      }
      if (tty) {
        std::cerr << "\r  " << stage;
        if (total > 0) std::cerr << " " << done << "/" << total;
        std::cerr << "   " << std::flush;
      }
    };
    RegimeModel model = derive_regimes(cfg, progress);
    if (tty) std::cerr << "\n";
    write_regime_model(model, a->out);
    if (!a->summary.empty()) write_file_atomically(a->summary, model_summary(model).dump(2) + "\n");
    std::cout << summary_text(model) << "\nregime model written to " << a->out << "\n";
    if (!a->summary.empty()) std::cout << "summary written to " << a->summary << "\n";
  });
}

}  // namespace isohypse::cli
