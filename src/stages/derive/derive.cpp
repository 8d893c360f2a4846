#include "isohypse/stages/derive.hpp"

#include <malloc.h>
#include <spdlog/spdlog.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <ctime>
#include <filesystem>
#include <map>
#include <set>
#include <sstream>

#include "isohypse/numerics/classifiability.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/json_config.hpp"
#include "isohypse/numerics/kmeans.hpp"
#include "isohypse/io/reader.hpp"
#include "isohypse/numerics/regime_sequence.hpp"

namespace isohypse {

namespace {

using json = nlohmann::json;

}  // namespace

DeriveConfig DeriveConfig::from_json(const json& j, const std::string& src) {
  DeriveConfig c;
  check_keys(j, {"inputs", "variable", "level_hpa", "domain", "daily_mean", "months", "climatology", "filter", "eof",
                 "regimes", "no_regime_threshold", "seed", "threads", "comment"},
             src);
  get_string_list(j, "inputs", c.inputs, src);
  get_value(j, "variable", c.variable, src);
  get_value(j, "level_hpa", c.level_hpa, src);
  if (j.contains("domain")) {
    const json& d = j["domain"];
    if (d.is_string()) c.domain = Domain::parse(d.get<std::string>(), src + ": domain");
    else if (d.is_array() && d.size() == 4 && std::all_of(d.begin(), d.end(), [](const json& x) { return x.is_number(); }))
      c.domain = Domain::parse(std::to_string(d[0].get<double>()) + "," + std::to_string(d[1].get<double>()) + "," +
                                   std::to_string(d[2].get<double>()) + "," + std::to_string(d[3].get<double>()),
                               src + ": domain");
    else throw InputError(src + ": domain must be \"LAT_MIN,LAT_MAX,LON_WEST,LON_EAST\" or an array of 4 numbers");
  }
  get_value(j, "daily_mean", c.daily_mean, src);
  get_value(j, "months", c.months, src);
  if (j.contains("climatology")) {
    const json& cl = j["climatology"];
    check_keys(cl, {"harmonics", "detrend"}, src + ": climatology");
    get_value(cl, "harmonics", c.climatology.harmonics, src + ": climatology");
    get_value(cl, "detrend", c.climatology.detrend, src + ": climatology");
  }
  if (j.contains("filter")) {
    check_keys(j["filter"], {"running_mean_days"}, src + ": filter");
    get_value(j["filter"], "running_mean_days", c.running_mean_days, src + ": filter");
  }
  if (j.contains("eof")) {
    const json& e = j["eof"];
    check_keys(e, {"count", "variance_fraction", "max_count", "method"}, src + ": eof");
    get_value(e, "count", c.eof.count, src + ": eof");
    get_value(e, "variance_fraction", c.eof.variance_fraction, src + ": eof");
    get_value(e, "max_count", c.eof.max_count, src + ": eof");
    std::string method = "auto";
    get_value(e, "method", method, src + ": eof");
    if (method == "auto") c.eof.method = EofOptions::Method::Automatic;
    else if (method == "exact") c.eof.method = EofOptions::Method::Exact;
    else if (method == "randomized") c.eof.method = EofOptions::Method::Randomized;
    else throw InputError(src + ": eof.method '" + method + "' (valid: auto, exact, randomized)");
  }
  if (j.contains("regimes")) {
    const json& r = j["regimes"];
    const std::string w = src + ": regimes";
    check_keys(r, {"k", "k_min", "k_max", "restarts", "classifiability_runs", "surrogates", "significance", "names"}, w);
    if (r.contains("k")) {
      if (r["k"].is_string() && r["k"] == "auto") c.k.reset();
      else if (r["k"].is_number_integer()) c.k = r["k"].get<int>();
      else throw InputError(w + ": k must be a whole number or \"auto\" (got " + r["k"].dump() + ")");
    }
    get_value(r, "k_min", c.k_min, w);
    get_value(r, "k_max", c.k_max, w);
    get_value(r, "restarts", c.restarts, w);
    get_value(r, "classifiability_runs", c.classifiability_runs, w);
    get_value(r, "surrogates", c.surrogates, w);
    get_value(r, "significance", c.significance, w);
    get_value(r, "names", c.names, w);
  }
  get_value(j, "no_regime_threshold", c.no_regime_threshold, src);
  get_value(j, "seed", c.seed, src);
  get_value(j, "threads", c.threads, src);
  return c;
}

json DeriveConfig::to_json() const {
  json j;
  j["inputs"] = inputs;
  j["variable"] = variable;
  j["level_hpa"] = level_hpa;
  if (domain) j["domain"] = domain->to_string();
  j["daily_mean"] = daily_mean;
  j["months"] = months;
  j["climatology"] = {{"harmonics", climatology.harmonics}, {"detrend", climatology.detrend}};
  j["filter"] = {{"running_mean_days", running_mean_days}};
  const char* method = eof.method == EofOptions::Method::Exact        ? "exact"
                       : eof.method == EofOptions::Method::Randomized ? "randomized"
                                                                      : "auto";
  j["eof"] = {{"count", eof.count}, {"variance_fraction", eof.variance_fraction}, {"max_count", eof.max_count},
              {"method", method}};
  j["regimes"] = {{"k", k ? json(*k) : json("auto")}, {"k_min", k_min}, {"k_max", k_max}, {"restarts", restarts},
                  {"classifiability_runs", classifiability_runs}, {"surrogates", surrogates},
                  {"significance", significance}, {"names", names}};
  j["no_regime_threshold"] = no_regime_threshold;
  j["seed"] = seed;
  j["threads"] = threads;
  return j;
}

void DeriveConfig::validate() const {
  auto bad = [](const std::string& m) { throw InputError(m); };
  if (inputs.empty()) bad("no input files: give --input PATH_OR_GLOB or \"inputs\" in the config");
  if (months.empty()) bad("months: the season has no months");
  for (int m : months)
    if (m < 1 || m > 12) bad("months: " + std::to_string(m) + " is not a month (1..12)");
  if (k && (*k < 1 || *k > 30)) bad("k = " + std::to_string(*k) + " (allowed 1..30, or auto)");
  if (k_min < 2 || k_max < k_min || k_max > 30)
    bad("k range " + std::to_string(k_min) + ".." + std::to_string(k_max) + " (need 2 <= k_min <= k_max <= 30)");
  if (restarts < 1) bad("restarts must be at least 1");
  if (classifiability_runs < 2) bad("classifiability_runs must be at least 2");
  if (surrogates < 1) bad("surrogates must be at least 1");
  if (!(significance > 0 && significance < 1)) bad("significance must lie between 0 and 1");
  if (!(no_regime_threshold >= -1 && no_regime_threshold <= 1)) bad("no_regime_threshold must lie in -1..1");
  if (eof.count < 0) bad("eof.count must be 0 (by variance) or positive");
  if (!(eof.variance_fraction > 0 && eof.variance_fraction <= 1)) bad("eof.variance_fraction must lie in (0, 1]");
  if (running_mean_days < 0 || running_mean_days > 31) bad("filter.running_mean_days must lie in 0..31");
  if (threads < 0) bad("threads must be 0 (all cores) or positive");
  if (!names.empty() && k && static_cast<int>(names.size()) != *k)
    bad("regimes.names has " + std::to_string(names.size()) + " names for k = " + std::to_string(*k));
}

RegimeModel derive_regimes(const DeriveConfig& cfg, const DeriveProgress& progress) {
  cfg.validate();
  using clock = std::chrono::steady_clock;
  json timings;
  auto t0 = clock::now();
  auto lap = [&](const char* stage) {
    auto now = clock::now();
    double s = std::chrono::duration<double>(now - t0).count();
    timings[stage] = std::round(s * 1000) / 1000;
    spdlog::debug("stage {} took {:.3f} s", stage, s);
    t0 = now;
  };
  auto report = [&](const std::string& stage, int done, int total) {
    if (progress) progress(stage, done, total);
  };

  // read
  std::vector<std::string> paths = expand_paths(cfg.inputs);
  ReadOptions ro;
  ro.variable = cfg.variable;
  ro.level_hpa = cfg.level_hpa;
  ro.domain = cfg.domain;
  ro.daily_means = cfg.daily_mean;
  ReadReport rep;
  Field field = read_heights(paths, ro, &rep, [&](std::size_t d, std::size_t n) { report("read", int(d), int(n)); });
  if (!rep.duplicates.empty())
    spdlog::warn("{} duplicate dates in the inputs (first kept), e.g. {}", rep.duplicates.size(),
                 to_string(rep.duplicates.front()));
  if (rep.missing_days) spdlog::info("{} days missing from the record in {} gaps", rep.missing_days, rep.gaps.size());
  malloc_trim(0);  // the read buffers go back to the system (glibc keeps freed memory otherwise): a lower peak
  lap("read");

  // climatology and anomalies
  report("climatology", 0, 0);
  Climatology clim = fit_climatology(field, cfg.climatology);
  subtract_climatology(field, clim);
  std::size_t nan_count = rep.missing_values;
  if (nan_count) {
    field.values.replace(arma::datum::nan, 0.0f);
    spdlog::warn("{} missing values ({:.2g}% of the record) set to the climatology", nan_count,
                 100.0 * double(nan_count) / double(field.values.n_elem));
  }
  running_mean(field.values, field.dates, cfg.running_mean_days);
  malloc_trim(0);  // and the climatology's work blocks
  lap("climatology");

  // season and weights
  std::set<int> season(cfg.months.begin(), cfg.months.end());
  std::vector<arma::uword> idx;
  std::vector<char> in_season(field.dates.size(), 0);
  for (std::size_t t = 0; t < field.dates.size(); ++t)
    if (season.count(field.dates[t].month)) {
      idx.push_back(t);
      in_season[t] = 1;
    }
  if (idx.size() < 10)
    throw NumericalError("only " + std::to_string(idx.size()) + " days of the record fall in the season (months " +
                         json(cfg.months).dump() + "); at least 10 are needed");
  std::vector<Date> season_dates;
  for (auto t : idx) season_dates.push_back(field.dates[t]);
  const std::vector<char> season_next = consecutive_flags(season_dates);
  const arma::vec w = field.grid.sqrt_cos_weights();
  const arma::fvec wf = arma::conv_to<arma::fvec>::from(w);
  arma::fmat X = field.values.cols(arma::uvec(idx));
  X.each_col() %= wf;

  // EOFs
  report("eof", 0, 0);
  EofResult eof = compute_eofs(X, season_next, cfg.eof);
  X.reset();
  lap("eof");
  spdlog::info("{} EOFs explain {:.1f}% of the weighted variance ({} method)", eof.eofs.n_cols,
               100 * arma::accu(eof.explained), eof.method);

  // number of regimes
  RegimeCountOptions rco;
  rco.k_min = cfg.k_min;
  rco.k_max = std::min<int>(cfg.k_max, static_cast<int>(idx.size()) - 1);
  rco.runs = cfg.classifiability_runs;
  rco.surrogates = cfg.surrogates;
  rco.level = cfg.significance;
  rco.seed = cfg.seed;
  rco.threads = cfg.threads;
  if (cfg.k && *cfg.k > static_cast<int>(idx.size()) / 2)
    throw InputError("k = " + std::to_string(*cfg.k) + " regimes is more than " + std::to_string(idx.size()) +
                     " in-season days allow (at most " + std::to_string(idx.size() / 2) + ")");
  std::vector<RegimeCountRow> table =
      regime_count_table(eof.pcs, season_next, rco, [&](int d, int n) { report("classifiability", d, n); });
  lap("classifiability");
  int k = cfg.k ? *cfg.k : choose_regime_count(table);

  // final partition
  report("kmeans", 0, 0);
  KMeansOptions ko;
  ko.k = k;
  ko.restarts = cfg.restarts;
  ko.seed = cfg.seed;
  ko.threads = cfg.threads;
  KMeansResult km = kmeans(eof.pcs.t(), ko);
  lap("kmeans");

  RegimeModel m;
  m.domain = cfg.domain.value_or(Domain{field.grid.lat.min(), field.grid.lat.max(), field.grid.lon(0),
                                        field.grid.lon(field.grid.n_lon() - 1)});
  m.grid = field.grid;
  m.variable = field.variable;
  m.calendar = rep.calendar;
  m.months = cfg.months;
  m.climatology = clim;
  m.running_mean_days = cfg.running_mean_days;
  m.weights = w;
  m.eof_mean = eof.mean;
  m.eofs = eof.eofs;
  m.eigenvalues = eof.eigenvalues;
  m.explained = eof.explained;
  m.north_error = eof.north_error;
  m.effective_n = eof.effective_n;
  m.total_variance = eof.total_variance;
  m.centroids = km.centroids;
  m.inertia = km.inertia;
  m.no_regime_threshold = cfg.no_regime_threshold;
  m.k_automatic = !cfg.k;
  for (const auto& r : table) m.k_table.push_back({r.k, r.index, r.surrogate_level, r.significant});

  // patterns: composites of the member days, in metres
  m.patterns.zeros(field.grid.n_points(), k);
  arma::vec counts(k, arma::fill::zeros);
  for (std::size_t i = 0; i < idx.size(); ++i) {
    int l = km.labels[i];
    m.patterns.col(l) += arma::conv_to<arma::vec>::from(field.values.col(idx[i]));
    counts(l) += 1;
  }
  for (int j = 0; j < k; ++j) m.patterns.col(j) /= std::max(1.0, counts(j));

  // labels for every day of the record
  report("labels", 0, 0);
  // Projected in blocks of days, so the record is never copied whole.
  arma::mat pcs_all(field.n_times(), eof.eofs.n_cols);
  for (arma::uword t0 = 0; t0 < field.n_times(); t0 += 2048) {
    const arma::uword t1 = std::min<arma::uword>(field.n_times(), t0 + 2048) - 1;
    arma::fmat part = field.values.cols(t0, t1);
    part.each_col() %= wf;
    pcs_all.rows(t0, t1) = project_onto_eofs(part, eof.mean, eof.eofs);
  }
  assign_regimes(pcs_all, m.centroids, m.no_regime_threshold, m.labels, m.correlation);
  m.dates = field.dates;
  m.in_season = in_season;

  // persistence and transitions over the season (no regime = state k)
  std::vector<int> season_labels;
  for (auto t : idx) season_labels.push_back(m.labels[t] < 0 ? k : m.labels[t]);
  SequenceStats st = sequence_stats(season_labels, season_next, k + 1, 5);
  m.transition = st.transition;
  m.transition_counts = st.counts;
  if (!cfg.names.empty() && static_cast<int>(cfg.names.size()) != k)
    throw InputError("regimes.names has " + std::to_string(cfg.names.size()) + " names but " + std::to_string(k) +
                     " regimes were found");
  for (int j = 0; j < k; ++j) {
    RegimeInfo r;
    r.id = "R" + std::to_string(j + 1);
    r.name = cfg.names.empty() ? describe_pattern(m.patterns.col(j), m.grid) : cfg.names[j];
    r.frequency = st.frequency(j);
    r.mean_run = st.runs[j].mean;
    r.median_run = st.runs[j].median;
    r.longest_run = st.runs[j].longest;
    r.episodes = st.runs[j].episodes;
    r.residence_days = st.residence_days(j);
    m.regimes.push_back(r);
  }
  lap("labels");

  // configuration and provenance
  m.config = cfg.to_json();
  json inputs = json::array();
  for (const auto& p : paths) {
    std::error_code ec;
    auto size = std::filesystem::file_size(p, ec);
    inputs.push_back({{"path", std::filesystem::absolute(p).string()}, {"bytes", ec ? 0 : size}});
  }
  const std::string stamp = utc_timestamp_now();
  m.provenance = {{"tool", "isohypse"},
                  {"version", ISOHYPSE_VERSION},
                  {"created", stamp},
                  {"inputs", inputs},
                  {"record", {{"first", to_string(field.dates.front())},
                              {"last", to_string(field.dates.back())},
                              {"days", field.dates.size()},
                              {"season_days", idx.size()},
                              {"missing_days", rep.missing_days},
                              {"missing_values", nan_count}}},
                  {"seed", cfg.seed},
                  {"eof_method", eof.method},
                  {"kmeans", {{"restarts", cfg.restarts}, {"best_restart", km.best_restart},
                              {"iterations", km.iterations}, {"inertia", km.inertia}}},
                  {"timings_s", timings}};
  return m;
}

json model_summary(const RegimeModel& m) {
  json j;
  j["format_version"] = m.format_version;
  j["domain"] = m.domain.to_string();
  j["grid"] = {{"n_lat", m.grid.n_lat()}, {"n_lon", m.grid.n_lon()}};
  j["season_months"] = m.months;
  j["record"] = m.provenance.value("record", json::object());
  json eofs = json::array();
  double cum = 0;
  for (arma::uword i = 0; i < m.eigenvalues.n_elem; ++i) {
    cum += m.explained(i);
    eofs.push_back({{"eof", i + 1}, {"eigenvalue", m.eigenvalues(i)}, {"explained", m.explained(i)},
                    {"cumulative", cum}, {"north_error", m.north_error(i)}, {"effective_n", m.effective_n(i)},
                    {"explained_error", m.north_error(i) / m.total_variance}});
  }
  j["eofs"] = eofs;
  json kt = k_table_json(m.k_table);
  j["regime_count_table"] = kt;
  j["k"] = m.k();
  j["k_automatic"] = m.k_automatic;
  json regs = json::array();
  for (const auto& ri : m.regimes) regs.push_back(regime_json(ri));
  j["regimes"] = regs;
  std::size_t season_days = 0, none = 0;
  for (std::size_t t = 0; t < m.labels.size(); ++t)
    if (m.in_season[t]) {
      ++season_days;
      none += m.labels[t] < 0;
    }
  j["no_regime_frequency"] = season_days ? double(none) / double(season_days) : 0.0;
  j["no_regime_threshold"] = m.no_regime_threshold;
  j["transitions"] = transition_json(model_states(m), m.transition, arma::conv_to<arma::mat>::from(m.transition_counts));
  j["provenance"] = m.provenance;
  return j;
}

std::string summary_text(const RegimeModel& m) {
  std::ostringstream o;
  char line[256];
  const json& rec = m.provenance.value("record", json::object());
  o << "Regime model over " << m.domain.to_string() << " (" << m.grid.n_lat() << " x " << m.grid.n_lon()
    << " points), season months " << json(m.months).dump() << "\n";
  if (!rec.empty())
    o << "Record " << rec.value("first", "") << " to " << rec.value("last", "") << ": " << rec.value("days", 0)
      << " days, " << rec.value("season_days", 0) << " in season\n";
  o << "\nEOF  explained  cumulative  North error (+-, % of variance)  effective N\n";
  double cum = 0;
  for (arma::uword i = 0; i < m.eigenvalues.n_elem; ++i) {
    cum += m.explained(i);
    std::snprintf(line, sizeof line, "%3llu  %8.2f%%  %9.2f%%  %8.2f%%                         %8.0f\n",
                  static_cast<unsigned long long>(i + 1), 100 * m.explained(i), 100 * cum,
                  100 * m.north_error(i) / m.total_variance, m.effective_n(i));
    o << line;
  }
  o << "\n  k  classifiability  surrogate " << "level  significant\n";
  for (const auto& e : m.k_table) {
    std::snprintf(line, sizeof line, "%3d  %15.3f  %15.3f  %s%s\n", e.k, e.index, e.surrogate_level,
                  e.significant ? "yes" : "no", e.k == m.k() ? "   <- used" : "");
    o << line;
  }
  o << "\nk = " << m.k() << (m.k_automatic ? " (chosen from the table)" : " (as configured)") << "\n\n";
  o << "id   frequency  mean run  longest  episodes>=5d  residence  name\n";
  for (const auto& r : m.regimes) {
    std::snprintf(line, sizeof line, "%-4s %8.1f%%  %6.1f d  %5d d  %12d  %7.1f d  %s\n", r.id.c_str(),
                  100 * r.frequency, r.mean_run, r.longest_run, r.episodes, r.residence_days, r.name.c_str());
    o << line;
  }
  json s = model_summary(m);
  std::snprintf(line, sizeof line, "no regime: %.1f%% of in-season days (anomaly correlation below %.2f)\n",
                100 * s["no_regime_frequency"].get<double>(), m.no_regime_threshold);
  o << line << "\nTransition probabilities (row: from, column: to)\n      ";
  for (const auto& r : m.regimes) {
    std::snprintf(line, sizeof line, "%7s", r.id.c_str());
    o << line;
  }
  o << "   none\n";
  for (arma::uword i = 0; i < m.transition.n_rows; ++i) {
    std::snprintf(line, sizeof line, "%-6s", i < m.regimes.size() ? m.regimes[i].id.c_str() : "none");
    o << line;
    for (arma::uword c = 0; c < m.transition.n_cols; ++c) {
      std::snprintf(line, sizeof line, "%7.3f", m.transition(i, c));
      o << line;
    }
    o << "\n";
  }
  return o.str();
}

}  // namespace isohypse
