#include "generate.hpp"

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <filesystem>
#include <map>
#include <ostream>
#include <sstream>

#include "files.hpp"
#include "grib_files.hpp"
#include "processes.hpp"
#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/error.hpp"
#include "base/random.hpp"

namespace demo {

using isohypse::Calendar;
using isohypse::Date;
using nlohmann::json;
namespace fs = std::filesystem;

namespace {

Date day(int y, int m, int d) { return isohypse::make_date(y, m, d, Calendar::Standard); }

struct Plan {
  int rean_first, rean_last;
  double rean_step;
  bool regional;  // bench, tiny: only the sector, 20N-80N, 170E-320E
  bool only_reanalysis;  // no analysis, forecasts or reforecasts
  bool truth;            // truth/: labels, patterns, truth.json (+ member tables when runs are written)
  Date ana_first, ana_last;
  double ana_step;
  Date fc_first;
  int fc_count, fc_members;
  Date rf_season_first, rf_season_last;  // Mondays and Thursdays of this span...
  int rf_year_first, rf_year_last;       // ...on the same month-day of these years
  int rf_members;
  // The no-skill system: reforecasts on the same schedule and members in
  // these years; forecasts from ns_fc_first (or the last ns_fc_count of the
  // forecasts when ns_fc_at_end).
  int ns_rf_year_first = 0, ns_rf_year_last = 0;
  Date ns_fc_first{};
  int ns_fc_count = 0, ns_fc_members = 0;
  bool ns_fc_at_end = false;
};

Plan plan_for(const std::string& size, double step) {
  Plan p;
  if (size == "full")
    p = {1991, 2020, 2.5, false, false, true, day(2025, 7, 1), day(2026, 6, 30), 2.5, day(2025, 12, 1), 90, 8,
         day(2025, 11, 15), day(2026, 3, 15), 2001, 2020, 4};
  else if (size == "small")
    p = {2013, 2020, 5.0, false, false, true, day(2025, 12, 1), day(2026, 3, 31), 5.0, day(2025, 12, 1), 20, 4,
         day(2025, 12, 1), day(2026, 1, 31), 2015, 2020, 3};
  if (size == "full") {
    p.ns_rf_year_first = 2011;  // half the reforecast years, to keep the demo's size down
    p.ns_rf_year_last = 2020;
    p.ns_fc_first = day(2026, 1, 9);
    p.ns_fc_count = 7;
    p.ns_fc_members = 8;
  } else if (size == "small") {
    p.ns_rf_year_first = p.rf_year_first;
    p.ns_rf_year_last = p.rf_year_last;
    p.ns_fc_count = 4;
    p.ns_fc_members = p.fc_members;
    p.ns_fc_at_end = true;
  } else if (size == "bench")
    p = {1991, 2020, 1.0, true, true, false, {}, {}, 0, {}, 0, 0, {}, {}, 0, 0, 0};
  else if (size == "tiny")
    p = {2011, 2020, 5.0, true, true, true, {}, {}, 0, {}, 0, 0, {}, {}, 0, 0, 0};
  else
    throw isohypse::InputError("--size: expected full, small, bench or tiny, found '" + size + "'");
  if (step != 0.0) {
    // The axes run over 30-degree multiples (20..80, 170..320, -180..180, 0..90).
    const double per30 = 30.0 / step;
    if (!(step > 0.0) || std::abs(per30 - std::round(per30)) > 1e-9)
      throw isohypse::InputError("--step: expected a grid step in degrees that divides 30, found " +
                                 std::to_string(step));
    p.rean_step = step;
  }
  return p;
}

std::string compact(const Date& d) {
  char buf[16];
  std::snprintf(buf, sizeof buf, "%04d%02d%02d", d.year, d.month, d.day);
  return buf;
}

bool monday_or_thursday(const Date& d) {
  // 1970-01-01 was a Thursday.
  auto n = isohypse::days_between(day(1970, 1, 1), d) % 7;
  if (n < 0) n += 7;
  return n == 0 || n == 4;
}

// Files written per set, for the summary and truth.json.
class Tally {
public:
  Tally(std::string root, std::ostream& log) : root_(std::move(root)), log_(log) {}

  std::string path(const std::string& rel) const { return (fs::path(root_) / rel).string(); }
  void start() { t0_ = std::chrono::steady_clock::now(); }
  void add(const std::string& rel) {
    files_.push_back(rel);
    bytes_ += fs::file_size(path(rel));
  }
  // Prints the set's line and returns its file list.
  json finish(const std::string& what) {
    double s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0_).count();
    char line[256];
    std::snprintf(line, sizeof line, "  %-19s %5zu files %9.1f MB %6.1f s  %s%s%s\n", what.c_str(), files_.size(),
                  static_cast<double>(bytes_) / 1e6, s, files_.empty() ? "" : files_.front().c_str(), files_.size() > 1 ? " .. " : "",
                  files_.size() > 1 ? fs::path(files_.back()).filename().c_str() : "");
    log_ << line << std::flush;
    total_files_ += files_.size();
    total_bytes_ += bytes_;
    json list = files_;
    files_.clear();
    bytes_ = 0;
    return list;
  }
  std::size_t total_files() const { return total_files_; }
  std::ostream& log() const { return log_; }
  double total_mb() const { return static_cast<double>(total_bytes_) / 1e6; }

private:
  std::string root_;
  std::ostream& log_;
  std::chrono::steady_clock::time_point t0_;
  std::vector<std::string> files_;
  std::uintmax_t bytes_ = 0, total_bytes_ = 0;
  std::size_t total_files_ = 0;
};

// Three days missing in the record's third year; four values on each of four
// days of its fifth year written as _FillValue, inside the sector.
Realities plant_realities(std::uint64_t seed, const Plan& plan, const std::vector<double>& lat,
                          const std::vector<double>& lon) {
  Realities r;
  for (int d = 17; d <= 19; ++d) r.missing_days.push_back(day(plan.rean_first + 2, 1, d));
  std::vector<double> lat_in, lon_in;
  for (double x : lat)
    if (x >= 25 && x <= 75) lat_in.push_back(x);
  for (double x : lon) {
    double east = x < 0 ? x + 360 : x;
    if (east >= 175 && east <= 315) lon_in.push_back(x);
  }
  isohypse::detail::Rng rng(isohypse::detail::derive_seed(seed, {99}));
  for (int d : {3, 10, 11, 24})
    for (int k = 0; k < 4; ++k)
      r.holes.push_back({day(plan.rean_first + 4, 2, d), lat_in[rng.below(lat_in.size())], lon_in[rng.below(lon_in.size())]});
  return r;
}

void append_members(std::string& csv, const Date& init, const std::vector<Trajectory>& runs) {
  for (std::size_t m = 0; m < runs.size(); ++m)
    for (int l = 0; l < kLeads; ++l) {
      const Date& v = runs[m].valid[static_cast<std::size_t>(l)];
      int label = cold_season(v) ? runs[m].regime[static_cast<std::size_t>(l)] : -1;
      csv += isohypse::to_string(init) + "," + std::to_string(m) + "," + std::to_string(l) + "," +
             isohypse::to_string(v) + "," + std::to_string(label) + "\n";
    }
}

json grid_json(const std::vector<double>& lat, const std::vector<double>& lon) {
  return {{"lat_first", lat.front()}, {"lat_last", lat.back()}, {"n_lat", lat.size()},
          {"lon_first", lon.front()}, {"lon_last", lon.back()}, {"n_lon", lon.size()}};
}

// A: the reanalysis, one file a year; fills truth["reanalysis"].
void write_reanalysis(const World& world, const Plan& plan, const Options& options, Tally& tally, json& truth) {
  const std::vector<double> rean_lat = plan.regional ? axis(80, 20, plan.rean_step) : axis(90, 0, plan.rean_step);
  const std::vector<double> rean_lon =
      plan.regional ? axis(170, 320, plan.rean_step) : axis(-180, 180 - plan.rean_step, plan.rean_step);
  const Realities realities = plant_realities(options.seed, plan, rean_lat, rean_lon);
  std::vector<std::string> rean_files, grib_files;
  for (int y = plan.rean_first; y <= plan.rean_last; ++y) {
    rean_files.push_back("reanalysis/hgt500_" + std::to_string(y) + ".nc");
    // The GRIB copy comes with the forecast sets (not with the benchmark's reanalysis-only worlds).
    if (!plan.only_reanalysis) grib_files.push_back("reanalysis_grib/hgt500_" + std::to_string(y) + ".grib2");
  }
  tally.start();
  const Surface rean_grid(world, Points::product(rean_lat, rean_lon));
  run_in_processes(rean_files.size(), options.processes, [&](std::size_t i) {
    write_reanalysis_year(world, rean_grid, rean_lat, rean_lon, plan.rean_first + static_cast<int>(i), realities,
                          tally.path(rean_files[i]), grib_files.empty() ? "" : tally.path(grib_files[i]));
  });
  for (const auto& rel : rean_files) tally.add(rel);
  json& rean = truth["reanalysis"];
  rean["files"] = tally.finish("reanalysis");
  if (!grib_files.empty()) {
    tally.start();
    for (const auto& rel : grib_files) tally.add(rel);
    truth["reanalysis_grib"] = {
        {"files", tally.finish("reanalysis_grib")},
        {"format", "GRIB 2: z (m2 s-2) at 500 hPa, one message a day, CCSDS packing at 16 bits, the NetCDF files' "
                   "fill values as bitmap missing points (written with reanalysis/)"},
        {"same_as", "reanalysis/ (its unpacked values)"}};
  }
  rean["grid"] = grid_json(rean_lat, rean_lon);
  rean["missing_days"] = json::array();
  for (const Date& d : realities.missing_days) rean["missing_days"].push_back(isohypse::to_string(d));
  rean["fill_values"] = json::array();
  for (const auto& h : realities.holes)
    rean["fill_values"].push_back({{"date", isohypse::to_string(h.day)}, {"lat", h.lat}, {"lon", h.lon}});
  tally.log() << "                      planted: " << realities.missing_days.size() << " days missing ("
              << isohypse::to_string(realities.missing_days.front()) << ".."
              << isohypse::to_string(realities.missing_days.back()) << "), " << realities.holes.size()
              << " values of " << realities.holes.front().day.year << " written as _FillValue\n";
}

struct Run {
  Date init;
  std::string rel;
};

// Writes the runs of one system (files in parallel) and its member table
// truth/<table>; returns the file list.
json write_runs(const World& world, const Surface& model_grid, const std::vector<Run>& runs, int members,
                ModelSystem system, const std::string& table, const std::string& what, const Options& options,
                Tally& tally) {
  tally.start();
  run_in_processes(runs.size(), options.processes, [&](std::size_t i) {
    write_model_run(model_grid, runs[i].init, model_run(world, runs[i].init, members, system), tally.path(runs[i].rel));
  });
  // The planted members again (cheap), for the truth tables.
  std::string csv = "init_date,member,lead,valid_date,regime\n";
  for (const Run& r : runs) {
    append_members(csv, r.init, model_run(world, r.init, members, system));
    tally.add(r.rel);
  }
  isohypse::write_file_atomically(tally.path("truth/" + table), csv);
  return tally.finish(what);
}

std::vector<Run> daily_runs(const Date& first, int count, const std::string& folder) {
  std::vector<Run> runs;
  for (int i = 0; i < count; ++i) {
    Date init = isohypse::add_days(first, i);
    runs.push_back({init, folder + "/fc_" + compact(init) + ".nc"});
  }
  return runs;
}

// Mondays and Thursdays of the plan's reforecast season on the same month-day of year_first..year_last.
std::vector<Run> reforecast_runs(const Plan& plan, int year_first, int year_last, const std::string& folder) {
  std::vector<Date> inits;
  for (Date s = plan.rf_season_first; !(plan.rf_season_last < s); s = isohypse::add_days(s, 1))
    if (monday_or_thursday(s))
      for (int y = year_first; y <= year_last; ++y) inits.push_back(day(y, s.month, s.day));
  std::sort(inits.begin(), inits.end());
  std::vector<Run> runs;
  for (const Date& init : inits) runs.push_back({init, folder + "/rf_" + compact(init) + ".nc"});
  return runs;
}

std::string schedule(const Plan& plan, int year_first, int year_last) {
  return "Mondays and Thursdays of " + isohypse::to_string(plan.rf_season_first) + ".." +
         isohypse::to_string(plan.rf_season_last) + " on the same month-day of " + std::to_string(year_first) + ".." +
         std::to_string(year_last);
}

// The reforecasts that classify's drift needs for the GRIB forecast set
// (`--reforecast-window kGribReforecastWindow` around its initialisations),
// again in GRIB 2: one file per day of the year with the runs of every year.
constexpr int kGribReforecastWindow = 3;

void write_reforecasts_grib_set(const World& world, const Surface& grid, const Plan& plan,
                                const std::vector<Run>& fc_runs, const std::vector<Run>& rf_runs, Tally& tally,
                                json& truth) {
  const int year = fc_runs.front().init.year;
  const Date from = isohypse::add_days(fc_runs.front().init, -kGribReforecastWindow);
  const Date to = isohypse::add_days(fc_runs.back().init, kGribReforecastWindow);
  std::map<std::string, std::vector<GribRun>> by_day;  // "MMDD" -> runs in order of year
  for (const Run& r : rf_runs) {
    if (r.init.month == 2 && r.init.day == 29) continue;
    const Date same_year = day(year, r.init.month, r.init.day);
    if (same_year < from || to < same_year) continue;
    by_day[compact(r.init).substr(4)].push_back({r.init, model_run(world, r.init, plan.rf_members)});
  }
  tally.start();
  for (const auto& [mmdd, runs] : by_day) {
    const std::string rel = "reforecasts_grib/rf_" + mmdd + ".grib2";
    write_reforecasts_grib(grid, runs, tally.path(rel));
    tally.add(rel);
  }
  truth["reforecasts_grib"] = {
      {"files", tally.finish("reforecasts_grib")},
      {"format", "GRIB 2: gh at 500 hPa, one file per day of the year with that day's reforecasts of every year, "
                 "one message per member and lead, CCSDS packing at 16 bits"},
      {"window_days", kGribReforecastWindow},
      {"same_as", "reforecasts/ initialised within " + std::to_string(kGribReforecastWindow) +
                      " days of the year of forecasts_grib/'s initialisations"}};
}

// B, C and D: the analysis, forecasts and reforecasts (one model on one grid),
// with the member tables truth/forecast_members.csv and truth/reforecast_members.csv;
// then C' and D', the no-skill system's forecasts and reforecasts (the same
// model, members diverged at lead 0), with truth/*_members_noskill.csv.
void write_model_sets(const World& world, const Plan& plan, const Options& options, Tally& tally, json& truth) {
  tally.start();
  const std::string ana = "analysis/hgt_levels_2025-2026.nc";
  write_analysis(world, plan.ana_first, plan.ana_last, plan.ana_step, tally.path(ana));
  tally.add(ana);
  truth["analysis"] = {{"files", tally.finish("analysis")},
                       {"first", isohypse::to_string(plan.ana_first)},
                       {"last", isohypse::to_string(plan.ana_last)},
                       {"step_deg", plan.ana_step}};

  const Surface grid(world, forecast_points());
  const auto skilful = ModelSystem::skilful, no_skill = ModelSystem::no_skill;
  truth["forecasts"] = {{"files", write_runs(world, grid, daily_runs(plan.fc_first, plan.fc_count, "forecasts"),
                                             plan.fc_members, skilful, "forecast_members.csv", "forecasts", options,
                                             tally)},
                        {"members", plan.fc_members},
                        {"leads", kLeads}};
  // The forecasts of the demo's issue date (2026-01-15, lag 4) again, in a lead layout (files.hpp).
  const Date steps_last = isohypse::add_days(plan.fc_first, std::min(45, plan.fc_count - 1));
  const std::vector<Run> steps_runs = daily_runs(isohypse::add_days(steps_last, -3), 4, "forecasts_steps");
  tally.start();
  for (const Run& r : steps_runs) {
    write_model_run_steps(grid, r.init, model_run(world, r.init, plan.fc_members, skilful), tally.path(r.rel));
    tally.add(r.rel);
  }
  truth["forecasts_steps"] = {{"files", tally.finish("forecasts_steps")},
                              {"layout", "z(time=1, step, member, y, x) geopotential, step in hours, valid_time(step)"},
                              {"same_as", "forecasts/ of the same initialisations"}};
  tally.start();
  for (const Run& r : steps_runs) {
    const std::string rel = "forecasts_grib/fc_" + compact(r.init) + ".grib2";
    write_model_run_grib(grid, r.init, model_run(world, r.init, plan.fc_members, skilful), tally.path(rel));
    tally.add(rel);
  }
  truth["forecasts_grib"] = {{"files", tally.finish("forecasts_grib")},
                             {"format", "GRIB 2: gh at 500 hPa, one message per member and lead, 24-bit simple packing"},
                             {"same_as", "forecasts/ of the same initialisations"}};
  const std::vector<Run> rf_runs = reforecast_runs(plan, plan.rf_year_first, plan.rf_year_last, "reforecasts");
  truth["reforecasts"] = {{"files", write_runs(world, grid, rf_runs, plan.rf_members, skilful,
                                               "reforecast_members.csv", "reforecasts", options, tally)},
                          {"members", plan.rf_members},
                          {"leads", kLeads},
                          {"schedule", schedule(plan, plan.rf_year_first, plan.rf_year_last)}};
  write_reforecasts_grib_set(world, grid, plan, steps_runs, rf_runs, tally, truth);

  const Date ns_first = plan.ns_fc_at_end ? isohypse::add_days(plan.fc_first, plan.fc_count - plan.ns_fc_count)
                                          : plan.ns_fc_first;
  truth["forecasts_noskill"] = {
      {"files", write_runs(world, grid, daily_runs(ns_first, plan.ns_fc_count, "forecasts_noskill"),
                           plan.ns_fc_members, no_skill, "forecast_members_noskill.csv", "forecasts_noskill",
                           options, tally)},
      {"members", plan.ns_fc_members},
      {"leads", kLeads},
      {"system", "no skill: every member diverged from the truth at lead 0 (world.members_noskill)"}};
  truth["reforecasts_noskill"] = {
      {"files", write_runs(world, grid,
                           reforecast_runs(plan, plan.ns_rf_year_first, plan.ns_rf_year_last, "reforecasts_noskill"),
                           plan.rf_members, no_skill, "reforecast_members_noskill.csv", "reforecasts_noskill",
                           options, tally)},
      {"members", plan.rf_members},
      {"leads", kLeads},
      {"schedule", schedule(plan, plan.ns_rf_year_first, plan.ns_rf_year_last)},
      {"system", "no skill: every member diverged from the truth at lead 0 (world.members_noskill)"}};
}

// E: the planted truth: labels.csv, patterns.nc and truth.json (the member
// tables were written with the runs).
void write_truth(const World& world, const Plan& plan, Tally& tally, json& truth) {
  tally.start();
  std::string labels = "date,regime\n";
  for (Date d = day(plan.rean_first, 1, 1); !(kLastDay < d); d = isohypse::add_days(d, 1))
    labels += isohypse::to_string(d) + "," + std::to_string(world.label(d)) + "\n";
  isohypse::write_file_atomically(tally.path("truth/labels.csv"), labels);
  json files = {"truth/truth.json", "truth/patterns.nc", "truth/labels.csv"};
  tally.add("truth/labels.csv");
  if (!plan.only_reanalysis)
    for (const char* rel : {"truth/forecast_members.csv", "truth/reforecast_members.csv",
                            "truth/forecast_members_noskill.csv", "truth/reforecast_members_noskill.csv"}) {
      tally.add(rel);
      files.push_back(rel);
    }
  write_patterns(world, plan.rean_step, tally.path("truth/patterns.nc"));
  tally.add("truth/patterns.nc");
  truth["truth_files"] = files;
  const int n = world.n_regimes();
  truth["labels"] = {{"first", isohypse::to_string(day(plan.rean_first, 1, 1))},
                     {"last", isohypse::to_string(kLastDay)},
                     {"n_regimes", n},
                     {"rule", n == 0 ? std::string("no regime planted (noise-only world): -1 every day")
                                     : "planted regime 0.." + std::to_string(n - 1) +
                                           " from November to March, -1 otherwise"}};
  isohypse::write_file_atomically(tally.path("truth/truth.json"), truth.dump(2) + "\n");
  tally.add("truth/truth.json");
  tally.finish("truth");
}

}  // namespace

void generate(const Options& options, std::ostream& log) {
  Plan plan = plan_for(options.size, options.step);
  if (options.forecasts > 0) {
    if (plan.only_reanalysis)
      throw isohypse::InputError("--forecasts: size " + options.size + " writes no forecasts");
    plan.fc_count = options.forecasts;
    if (plan.ns_fc_at_end) plan.ns_fc_count = std::min(plan.ns_fc_count, plan.fc_count);
  }
  options.world.validate();
  const auto t_start = std::chrono::steady_clock::now();
  std::error_code ec;
  for (const char* sub :
       {"reanalysis", "reanalysis_grib", "analysis", "forecasts", "forecasts_steps", "forecasts_grib", "reforecasts",
        "reforecasts_grib", "forecasts_noskill",
        "reforecasts_noskill", "truth"}) {
    const std::string name = sub;
    if (plan.only_reanalysis && name != "reanalysis" && !(plan.truth && name == "truth")) continue;
    fs::create_directories(fs::path(options.out) / sub, ec);
    if (ec) throw isohypse::InputError("--out: cannot create " + (fs::path(options.out) / sub).string() + ": " + ec.message());
  }
  log << "isohypse-demo-world: size " << options.size << ", seed " << options.seed << ", "
      << (options.world.noise_only ? std::string("no regimes (noise only)")
                                   : std::to_string(options.world.regimes) + " regimes");
  if (options.world.small_noise_std > 0.0) log << ", small-scale noise " << options.world.small_noise_std << " m";
  log << ", into " << options.out << "\n";

  const World world(options.seed, options.world);
  Tally tally(options.out, log);
  json truth;
  truth["note"] = "An invented world: every name, place and number is synthetic.";
  truth["seed"] = options.seed;
  truth["size"] = options.size;
  truth["n_regimes"] = world.n_regimes();
  truth["domain"] = {{"lat_min", 20}, {"lat_max", 80}, {"lon_west", 170}, {"lon_east", 320},
                     {"text", "20N-80N, 170E eastward to 40W (crosses the dateline)"}};
  truth["world"] = world.describe();

  write_reanalysis(world, plan, options, tally, truth);
  if (!plan.only_reanalysis) write_model_sets(world, plan, options, tally, truth);
  if (plan.truth) write_truth(world, plan, tally, truth);

  double s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t_start).count();
  char line[160];
  std::snprintf(line, sizeof line, "  total               %5zu files %9.1f MB %6.1f s\n", tally.total_files(),
                tally.total_mb(), s);
  log << line;
}

}  // namespace demo
