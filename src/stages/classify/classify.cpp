#include "isohypse/stages/classify.hpp"
#include "isohypse/base/vocabulary.hpp"

#include <spdlog/spdlog.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <ctime>
#include <filesystem>
#include <map>
#include <memory>
#include <mutex>
#include <set>
#include <sstream>

#include "isohypse/base/atomic_file.hpp"
#include "isohypse/numerics/climatology.hpp"
#include "isohypse/numerics/eof.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/forecast.hpp"
#include "isohypse/numerics/labeller.hpp"
#include "isohypse/stages/observed.hpp"
#include "isohypse/io/reader.hpp"
#include "base/blas_threads.hpp"
#include "base/parallel.hpp"

namespace isohypse {

namespace {

using json = nlohmann::json;
using Clock = std::chrono::steady_clock;

double seconds_since(Clock::time_point t0) { return std::chrono::duration<double>(Clock::now() - t0).count(); }

// Position of a date on a 365-day year (29 February shares 28 February's).
int year_position(const Date& d) {
  int pos = 0;
  for (int m = 1; m < d.month; ++m) pos += days_in_month(2001, m, Calendar::NoLeap);
  return pos + std::min(d.day, days_in_month(2001, d.month, Calendar::NoLeap)) - 1;
}

int circular_day_distance(const Date& a, const Date& b) {
  int d = std::abs(year_position(a) - year_position(b));
  return std::min(d, 365 - d);
}

json vec_json(const arma::vec& v) {
  json a = json::array();
  for (double x : v) a.push_back(number_or_null(x));
  return a;
}

json by_state(const std::vector<std::string>& states, const arma::vec& v) {
  json o = json::object();
  for (std::size_t s = 0; s < states.size(); ++s) o[states[s]] = number_or_null(v(s));
  return o;
}

// Member sums of each reforecast initialisation, read once however many
// forecast initialisations' windows include it.
struct ModelClimateCache {
  struct Sum {
    arma::fmat total;  // n_points x n_leads
    std::size_t members = 0;
  };
  std::map<std::string, Sum> per_init;
  std::map<std::string, arma::fmat> by_key;
  std::vector<std::string> files_used;
};

}  // namespace

json classify_forecasts(const RegimeModel& model, const ClassifyConfig& cfg, const ClassifyProgress& progress,
                        ClassifyTimings* timings) {
  // Every BLAS call here is small (the climatology of 46 days, one member's
  // projection): one BLAS thread, or its idle pool would spin on the cores
  // that the reading and labelling threads need.
  const detail::ScopedBlasThreads one_blas_thread(1);
  const auto start = Clock::now();
  auto last = start;
  auto lap = [&](double* into) {  // time since the previous lap into *into
    const auto now = Clock::now();
    if (into) *into = std::chrono::duration<double>(now - last).count();
    last = now;
  };
  auto report = [&](const std::string& s, int d, int n) {
    if (progress) progress(s, d, n);
  };
  const int k = model.k();
  const int n_states = k + 1;
  const std::vector<std::string> states = model_states(model);

  // 1. Metadata of every forecast; the lagged ensemble.
  std::vector<std::string> fc_paths = expand_paths(cfg.forecasts);
  report("scan", 0, static_cast<int>(fc_paths.size()));
  std::vector<Initialisation> all = scan_forecasts(fc_paths, cfg.variable, model.domain, &model.grid);
  Date issue = cfg.issue_date ? *cfg.issue_date : all.back().init_real;
  issue.calendar = Calendar::ProlepticGregorian;
  std::vector<const Initialisation*> chosen;
  for (const auto& in : all)
    if (days_between(in.init_real, issue) >= 0) chosen.push_back(&in);
  if (chosen.empty())
    throw InputError("no forecast initialised on or before the issue date " + to_string(issue) + " (the first is " +
                     to_string(all.front().init_real) + ")");
  if (cfg.lag > 0 && static_cast<int>(chosen.size()) > cfg.lag)
    chosen.erase(chosen.begin(), chosen.end() - cfg.lag);
  std::vector<int> ages;
  for (const auto* in : chosen) ages.push_back(static_cast<int>(days_between(in->init_real, issue)));
  std::vector<double> init_weights = initialisation_weights(ages, cfg.weights);

  const Regridder regrid(chosen.back()->native_grid, model.grid, chosen.back()->files.front());

  // 2. Reforecasts: metadata of all, data of those within the window.
  std::vector<Initialisation> refc;
  if (!cfg.reforecasts.empty()) {
    std::vector<std::string> rf_paths = expand_paths(cfg.reforecasts);
    report("scan reforecasts", 0, static_cast<int>(rf_paths.size()));
    refc = scan_forecasts(rf_paths, cfg.variable, model.domain, &model.grid);
    if (!refc.front().native_grid.same_as(chosen.back()->native_grid))
      throw InputError(refc.front().files.front() + ": the reforecast grid (" +
                       std::to_string(refc.front().native_grid.n_lat()) + " x " +
                       std::to_string(refc.front().native_grid.n_lon()) + " over the domain) does not match the " +
                       "forecast grid of " + chosen.back()->files.front() + " (" +
                       std::to_string(chosen.back()->native_grid.n_lat()) + " x " +
                       std::to_string(chosen.back()->native_grid.n_lon()) + ")");
  }
  lap(timings ? &timings->scan_s : nullptr);
  // Reforecast initialisations within the window of days of the year of `in`.
  auto near_reforecasts = [&](const Initialisation& in) {
    std::vector<const Initialisation*> near;
    for (const auto& r : refc)
      if (circular_day_distance(r.init, in.init) <= cfg.reforecast_window_days && r.n_leads >= in.n_leads)
        near.push_back(&r);
    if (near.empty())
      throw InputError("no reforecast initialised within " + std::to_string(cfg.reforecast_window_days) +
                       " days of the year of " + in.id() + " with at least " + std::to_string(in.n_leads) +
                       " lead days (reforecasts run from " + refc.front().id() + " to " + refc.back().id() + ")");
    return near;
  };
  std::mutex netcdf;  // netCDF-C is not thread-safe: every read holds this
  ModelClimateCache cache;
  if (!refc.empty()) {
    // The member sum of every reforecast initialisation some chosen one
    // needs, each read once. Threads share the initialisations (reads under
    // the lock); each sums its members in order, so the result does not
    // depend on the threads.
    std::set<const Initialisation*> wanted;
    for (const auto* in : chosen)
      for (const auto* r : near_reforecasts(*in)) wanted.insert(r);
    std::vector<const Initialisation*> needed;
    for (const auto& r : refc)
      if (wanted.count(&r)) needed.push_back(&r);
    EnsembleReader reader(needed, regrid, cfg.variable);
    std::vector<std::size_t> first_slot(needed.size() + 1, reader.size());
    for (std::size_t k = reader.size(); k-- > 0;) first_slot[reader.slot(k).init] = k;
    detail::StatePool<EnsembleReader::Work> buffers([] { return std::make_unique<EnsembleReader::Work>(); });
    std::vector<ModelClimateCache::Sum> sums(needed.size());
    report("reforecasts", 0, static_cast<int>(needed.size()));
    detail::parallel_for(
        needed.size(), cfg.threads,
        [&](std::size_t u) {
          const auto w = buffers.lease();
          ModelClimateCache::Sum& s = sums[u];
          for (std::size_t k = first_slot[u]; k < reader.size() && reader.slot(k).init == u; ++k) {
            reader.fetch(k, netcdf, *w);
            if (s.total.is_empty()) s.total.zeros(w->heights.n_rows, w->heights.n_cols);
            s.total += w->heights;
            ++s.members;
          }
        },
        [&](std::size_t done, std::size_t n) { report("reforecasts", static_cast<int>(done), static_cast<int>(n)); });
    for (std::size_t u = 0; u < needed.size(); ++u) {
      for (const auto& f : needed[u]->files) cache.files_used.push_back(f);
      cache.per_init.emplace(needed[u]->id(), std::move(sums[u]));
    }
  }
  // The model climate of `in`: the mean of the near reforecasts' members by
  // lead, smoothed in lead.
  auto model_climate = [&](const Initialisation& in) -> const arma::fmat& {
    std::string key;
    std::vector<const Initialisation*> near = near_reforecasts(in);
    for (const auto* r : near) key += r->id() + ";";
    auto it = cache.by_key.find(key);
    if (it != cache.by_key.end()) return it->second;
    arma::fmat sum(model.grid.n_points(), in.n_leads, arma::fill::zeros);
    std::size_t n = 0;
    for (const auto* r : near) {
      const ModelClimateCache::Sum& s = cache.per_init.at(r->id());
      sum += s.total.cols(0, in.n_leads - 1);
      n += s.members;
    }
    sum /= static_cast<float>(n);
    std::vector<Date> leads;  // consecutive days: a plain centred running mean in lead
    for (int l = 0; l < in.n_leads; ++l) leads.push_back(in.valid_model(l));
    running_mean(sum, leads, cfg.lead_smoothing_days);
    return cache.by_key.emplace(key, std::move(sum)).first->second;
  };

  // 3. Members: anomalies, projection, labels, on every core: each thread
  // takes the next member, reads it under a lock (netCDF-C is not
  // thread-safe), then unpacks, projects and labels it while another thread
  // reads. The model climate from reforecasts is read first.
  std::vector<std::vector<Date>> valid_model(chosen.size());
  std::vector<arma::fmat> reference(chosen.size());
  for (std::size_t i = 0; i < chosen.size(); ++i) {
    const Initialisation& in = *chosen[i];
    for (int l = 0; l < in.n_leads; ++l) valid_model[i].push_back(in.valid_model(l));
    reference[i] = refc.empty() ? model.climatology.evaluate(valid_model[i]) : model_climate(in);
  }
  lap(timings ? &timings->reference_s : nullptr);

  EnsembleReader reader(chosen, regrid, cfg.variable);
  const std::size_t n_members = reader.size();
  std::vector<MemberTrack> tracks(n_members);
  std::vector<json> detail(cfg.member_detail ? n_members : 0);
  struct Worker {  // one thread's buffers, reused member after member
    explicit Worker(const RegimeModel& m) : labeller(m) {}
    EnsembleReader::Work work;
    RegimeLabeller labeller;
    EnsembleReader::Times times;
    double label_s = 0;
  };
  detail::StatePool<Worker> workers([&] { return std::make_unique<Worker>(model); });
  report("classify", 0, static_cast<int>(n_members));
  detail::parallel_for(
      n_members, cfg.threads,
      [&](std::size_t k) {
        const auto w = workers.lease();
        reader.fetch(k, netcdf, w->work, &w->times);
        const auto t0 = Clock::now();
        const std::size_t i = reader.slot(k).init;
        const Initialisation& in = *chosen[i];
        arma::vec cor;
        MemberTrack& t = tracks[k];
        t.initialisation = in.id();
        t.member = in.members[reader.slot(k).member].number;
        t.weight = init_weights[i];
        t.first_offset = -ages[i];
        t.labels = w->labeller.label(w->work.heights, reference[i], valid_model[i], model.running_mean_days, &cor);
        if (cfg.member_detail) {
          json labels = json::array();
          for (int l : t.labels) labels.push_back(states[static_cast<std::size_t>(l)]);
          detail[k] = {{"initialisation", in.id()}, {"member", t.member}, {"weight", t.weight},
                       {"first_valid_date", to_string(in.valid_real(0))}, {"first_lead_days", t.first_offset},
                       {"regimes", labels}, {"correlation", vec_json(cor)}};
        }
        w->label_s += seconds_since(t0);
      },
      [&](std::size_t done, std::size_t n) { report("classify", static_cast<int>(done), static_cast<int>(n)); });
  if (timings) {
    timings->threads = static_cast<int>(workers.all().size());
    for (const auto& w : workers.all()) {
      timings->read_s += w->times.read_s;
      timings->unpack_s += w->times.finish_s;
      timings->label_s += w->label_s;
    }
  }
  lap(timings ? &timings->members_wall_s : nullptr);
  json member_detail = json::array();
  for (auto& d : detail) member_detail.push_back(std::move(d));
  json inits = json::array();
  int total_members = 0;
  for (std::size_t i = 0; i < chosen.size(); ++i) {
    const Initialisation& in = *chosen[i];
    total_members += static_cast<int>(in.members.size());
    json files = json::array();
    for (const auto& f : in.files) files.push_back(f);
    inits.push_back({{"date", to_string(in.init_real)}, {"model_date", to_string(in.init)},
                     {"model_calendar", calendar_name(in.init.calendar)}, {"age_days", ages[i]},
                     {"weight", init_weights[i]}, {"members", in.members.size()}, {"lead_days", in.n_leads},
                     {"files", files}});
  }
  report("statistics", 0, 0);

  // 4. Statistics from the member trajectories.
  int last_offset = 0;
  for (const auto& t : tracks) last_offset = std::max(last_offset, t.first_offset + static_cast<int>(t.labels.size()) - 1);
  const Initialisation& latest = *chosen.back();
  json daily = json::array();
  for (const auto& d : daily_probabilities(tracks, n_states, 0, last_offset)) {
    int lead_latest = d.offset + ages.back();
    json entry = {{"valid_date", to_string(add_days(issue, d.offset))},
                  {"lead_days", d.offset},
                  {"probabilities", by_state(states, d.probability)},
                  {"most_likely", states[static_cast<std::size_t>(d.most_likely)]},
                  {"members", d.members},
                  {"weight_sum", d.weight_sum}};
    if (lead_latest >= 0 && lead_latest < latest.n_leads)
      entry["model_valid_date"] = to_string(latest.valid_model(lead_latest));
    daily.push_back(entry);
  }
  json windows = json::array();
  for (const auto& [a, b] : cfg.windows) {
    if (a > last_offset) continue;
    WindowSummary w = window_summary(tracks, n_states, a, std::min(b, last_offset));
    windows.push_back({{"first_lead_days", w.first},
                       {"last_lead_days", w.last},
                       {"from", to_string(add_days(issue, w.first))},
                       {"to", to_string(add_days(issue, w.last))},
                       {"expected_days", by_state(states, w.expected_days)},
                       {"dominance", by_state(states, w.dominance)},
                       {"members", w.members},
                       {"transitions", transition_json(states, w.transition, w.transition_counts)}});
  }
  json ages_json = json::array();
  for (const auto& a : current_age(tracks, n_states, 0, last_offset))
    ages_json.push_back({{"lead_days", a.offset}, {"valid_date", to_string(add_days(issue, a.offset))},
                         {"probability", vec_json(a.probability)}, {"mean_age_days", a.mean_age}});
  LastingProbability lasting = lasting_probability(tracks, n_states, {3, 5, 7});
  json lasting_json = json::object();
  json lasting_clim = json::object();
  for (int s = 0; s < n_states; ++s) {
    lasting_json[states[s]] = vec_json(lasting.probability.row(s).t());
    arma::vec c(lasting.horizons.size());
    for (std::size_t h = 0; h < lasting.horizons.size(); ++h)
      c(h) = std::pow(model.transition(s, s), lasting.horizons[h]);
    lasting_clim[states[s]] = vec_json(c);
  }

  // 5. The latest observed regime and its age.
  json observed = nullptr;
  {
    ObservedSequence obs = cfg.analysis.empty()
                               ? observed_from_model(model)
                               : observed_from_files(model, cfg.analysis, cfg.variable, std::nullopt, issue);
    while (!obs.dates.empty() && days_between(obs.dates.back(), issue) < 0) {
      obs.dates.pop_back();
      obs.labels.pop_back();
    }
    // The model's record counts only when it reaches the issue date (or the day before).
    if (!obs.dates.empty() && (!cfg.analysis.empty() || days_between(obs.dates.back(), issue) <= 1)) {
      int age = current_run_length(obs.labels, consecutive_flags(obs.dates));
      observed = {{"regime", states[static_cast<std::size_t>(obs.labels.back())]},
                  {"age_days", age},
                  {"as_of", to_string(obs.dates.back())},
                  {"source", obs.source}};
    }
  }

  lap(timings ? &timings->statistics_s : nullptr);

  // 6. The document.
  json regimes = json::array();
  for (int r = 0; r < k; ++r)
    regimes.push_back({{"id", model.regimes[r].id}, {"name", model.regimes[r].name},
                       {"climatological_frequency", model.regimes[r].frequency}});
  const std::string stamp = utc_timestamp_now();
  json fc_files = json::array();
  for (const auto& p : fc_paths) fc_files.push_back(p);
  json g;
  g["format"] = "isohypse-guidance";
  g["format_version"] = kGuidanceFormatVersion;
  g["caution"] = kCaution;
  g["issue_date"] = to_string(issue);
  g["regimes"] = regimes;
  g["states"] = states;
  g["ensemble"] = {{"initialisations", inits}, {"members", total_members}, {"weights", cfg.weights.to_string()},
                   {"lag", static_cast<int>(chosen.size())}};
  g["bias_correction"] = refc.empty()
      ? json{{"applied", false},
             {"note", "no reforecasts given: anomalies are against the regime model's reanalysis climatology, "
                      "so the model's own drift with lead is not removed"}}
      : json{{"applied", true},
             {"method", "anomalies against the mean of reforecasts initialised within +-" +
                            std::to_string(cfg.reforecast_window_days) + " days of the year, by lead day, smoothed "
                            "with a " + std::to_string(cfg.lead_smoothing_days) + "-day running mean in lead"},
             {"reforecast_files", cache.files_used.size()}};
  g["daily"] = daily;
  g["windows"] = windows;
  g["persistence"] = {{"current_age", ages_json},
                      {"current_age_bins", "probability[i] is for age i+1 days; the last bin is that age or more"},
                      {"lasting", {{"horizons_days", lasting.horizons}, {"forecast", lasting_json},
                                   {"climatological", lasting_clim}}},
                      {"observed", observed}};
  g["transitions"] = {
      {"climatological",
       transition_json(states, model.transition, arma::conv_to<arma::mat>::from(model.transition_counts))}};
  if (cfg.member_detail) g["members"] = member_detail;
  g["provenance"] = {{"tool", "isohypse"},
                     {"version", ISOHYPSE_VERSION},
                     {"created", stamp},
                     {"model", {{"path", model.path}, {"sha256", model.sha256}, {"format_version", model.format_version}}},
                     {"forecast_files", fc_files},
                     {"reforecast_files_read", cache.files_used},
                     {"analysis_files", cfg.analysis}};
  lap(timings ? &timings->document_s : nullptr);
  if (timings) timings->total_s = seconds_since(start);
  return g;
}

void write_guidance_csv(const json& g, const std::string& dir) {
  std::error_code ec;
  std::filesystem::create_directories(dir, ec);
  if (ec) throw InputError(dir + ": cannot create the folder: " + ec.message());
  const auto& states = g.at("states");
  auto header = [&](std::ostringstream& o, const std::string& first) {
    o << first;
    for (const auto& s : states) o << "," << s.get<std::string>();
    o << "\n";
  };
  auto num = [](const json& v) {
    if (v.is_null()) return std::string();
    std::ostringstream o;
    o.precision(6);
    o << v.get<double>();
    return o.str();
  };
  std::ostringstream d;
  header(d, "valid_date,lead_days");
  for (const auto& e : g.at("daily")) {
    d << e.at("valid_date").get<std::string>() << "," << e.at("lead_days").get<int>();
    for (const auto& s : states) d << "," << num(e.at("probabilities").at(s.get<std::string>()));
    d << "\n";
  }
  std::ostringstream w;
  w << "first_lead_days,last_lead_days,from,to";
  for (const auto& s : states) w << ",p_dominant_" << s.get<std::string>();
  for (const auto& s : states) w << ",expected_days_" << s.get<std::string>();
  w << "\n";
  for (const auto& e : g.at("windows")) {
    w << e.at("first_lead_days").get<int>() << "," << e.at("last_lead_days").get<int>() << ","
      << e.at("from").get<std::string>() << "," << e.at("to").get<std::string>();
    for (const auto& s : states) w << "," << num(e.at("dominance").at(s.get<std::string>()));
    for (const auto& s : states) w << "," << num(e.at("expected_days").at(s.get<std::string>()));
    w << "\n";
  }
  write_file_atomically((std::filesystem::path(dir) / "daily.csv").string(), d.str());
  write_file_atomically((std::filesystem::path(dir) / "windows.csv").string(), w.str());
}

std::string guidance_text(const json& g) {
  std::ostringstream o;
  char line[256];
  o << "Regime guidance issued " << g.at("issue_date").get<std::string>() << " from "
    << g.at("ensemble").at("members").get<int>() << " members of " << g.at("ensemble").at("lag").get<int>()
    << " initialisations (weights " << g.at("ensemble").at("weights").get<std::string>() << ")\n";
  o << (g.at("bias_correction").at("applied").get<bool>() ? "Model drift removed with reforecasts.\n"
                                                           : "No reforecasts: model drift NOT removed.\n");
  const json& obs = g.at("persistence").at("observed");
  if (!obs.is_null())
    o << "Observed regime " << obs.at("regime").get<std::string>() << " for " << obs.at("age_days").get<int>()
      << " days as of " << obs.at("as_of").get<std::string>() << " (" << obs.at("source").get<std::string>() << ")\n";
  std::map<std::string, std::string> names;
  for (const auto& r : g.at("regimes")) names[r.at("id")] = r.at("name");
  names[kNoRegimeState] = kNoRegimeName;
  o << "\nwindow (lead days)   most likely to dominate                      probability\n";
  for (const auto& w : g.at("windows")) {
    std::string best;
    double bp = -1;
    for (const auto& [s, p] : w.at("dominance").items())
      if (!p.is_null() && p.get<double>() > bp) {
        bp = p.get<double>();
        best = s;
      }
    std::snprintf(line, sizeof line, "%3d-%-3d %s..%s  %-4s %-40.40s %5.0f%%\n", w.at("first_lead_days").get<int>(),
                  w.at("last_lead_days").get<int>(), w.at("from").get<std::string>().substr(5).c_str(),
                  w.at("to").get<std::string>().substr(5).c_str(), best.c_str(), names[best].c_str(), 100 * bp);
    o << line;
  }
  o << "\n" << g.at("caution").get<std::string>() << "\n";
  return o.str();
}

}  // namespace isohypse
