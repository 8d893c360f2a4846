#include "stages/classify/guidance_document.hpp"

#include <string>
#include <utility>
#include <vector>

#include "isohypse/base/error.hpp"
#include "isohypse/base/vocabulary.hpp"

namespace isohypse {

namespace {

using json = nlohmann::json;

const std::string& state_name(const std::vector<std::string>& states, int s) {
  if (s < 0 || static_cast<std::size_t>(s) >= states.size())
    throw InternalError("guidance document: state " + std::to_string(s) + " of " + std::to_string(states.size()));
  return states[static_cast<std::size_t>(s)];
}

json vec_json(const arma::vec& v) {
  json a = json::array();
  for (double x : v) a.push_back(number_or_null(x));
  return a;
}

json by_state(const std::vector<std::string>& states, const arma::vec& v) {
  if (v.n_elem != states.size())
    throw InternalError("guidance document: " + std::to_string(v.n_elem) + " values for " +
                        std::to_string(states.size()) + " states");
  json o = json::object();
  for (std::size_t s = 0; s < states.size(); ++s) o[states[s]] = number_or_null(v(s));
  return o;
}

json regimes_json(const RegimeModel& model) {
  json regimes = json::array();
  for (int r = 0; r < model.k(); ++r) {
    const RegimeInfo& info = model.regimes.at(static_cast<std::size_t>(r));
    regimes.push_back({{"id", info.id}, {"name", info.name}, {"climatological_frequency", info.frequency}});
  }
  return regimes;
}

json ensemble_json(const LaggedEnsemble& e, const ClassifyConfig& cfg) {
  json inits = json::array();
  for (std::size_t i = 0; i < e.chosen.size(); ++i) {
    const Initialisation& in = *e.chosen[i];
    inits.push_back({{"date", to_string(in.init_real)}, {"model_date", to_string(in.init)},
                     {"model_calendar", calendar_name(in.init.calendar)}, {"age_days", e.ages[i]},
                     {"weight", e.weights[i]}, {"members", in.members.size()}, {"lead_days", in.n_leads},
                     {"files", in.files}});
  }
  return {{"initialisations", inits}, {"members", e.total_members()}, {"weights", cfg.weights.to_string()},
          {"lag", static_cast<int>(e.chosen.size())}};
}

json bias_correction_json(const ModelClimate& climate, const ClassifyConfig& cfg) {
  if (!climate.from_reforecasts)
    return {{"applied", false},
            {"note", "no reforecasts given: anomalies are against the regime model's reanalysis climatology, "
                     "so the model's own drift with lead is not removed"}};
  return {{"applied", true},
          {"method", "the model's mean drift removed: anomalies against the regime model's climatology plus the mean "
                     "of [reforecast - climatology] of reforecasts initialised within +-" +
                         std::to_string(cfg.reforecast_window_days) + " days of the year, by lead day, smoothed " +
                         "with a " + std::to_string(cfg.lead_smoothing_days) + "-day running mean in lead"},
          {"reforecast_files", climate.reforecast_files_read.size()}};
}

// Each valid day's probabilities (the headline: calibrated when a
// calibration is applied, with both beside it); the latest initialisation's
// model-calendar date where it reaches the day.
json daily_json(const WindowStatistics& s, const LaggedEnsemble& e, const std::vector<std::string>& states,
                const std::optional<CalibratedGuidance>& cal) {
  json daily = json::array();
  for (std::size_t i = 0; i < s.daily.size(); ++i) {
    const DayProbabilities& d = s.daily[i];
    const int lead_latest = d.offset + e.ages.back();
    json entry = {{"valid_date", to_string(add_days(e.issue, d.offset))},
                  {"lead_days", d.offset},
                  {"probabilities", by_state(states, cal ? cal->daily[i] : d.probability)},
                  {"most_likely", state_name(states, cal ? cal->daily_most_likely[i] : d.most_likely)},
                  {"members", d.members},
                  {"weight_sum", d.weight_sum}};
    if (cal) {
      entry["raw_probabilities"] = by_state(states, d.probability);
      entry["calibrated_probabilities"] = entry["probabilities"];
    }
    if (lead_latest >= 0 && lead_latest < e.latest().n_leads)
      entry["model_valid_date"] = to_string(e.latest().valid_model(lead_latest));
    daily.push_back(entry);
  }
  return daily;
}

json windows_json(const WindowStatistics& s, const Date& issue, const std::vector<std::string>& states,
                  const std::optional<CalibratedGuidance>& cal) {
  json windows = json::array();
  for (std::size_t i = 0; i < s.windows.size(); ++i) {
    const WindowSummary& w = s.windows[i];
    const CalibratedWindow* c = cal ? &cal->windows[i] : nullptr;
    json entry = {{"first_lead_days", w.first},
                  {"last_lead_days", w.last},
                  {"from", to_string(add_days(issue, w.first))},
                  {"to", to_string(add_days(issue, w.last))},
                  {"expected_days", by_state(states, c ? c->expected_days : w.expected_days)},
                  {"dominance", by_state(states, c ? c->dominance : w.dominance)},
                  {"members", w.members},
                  {"member_weight", w.member_weight},
                  {"initialisations", w.initialisations},
                  {"min_coverage", kDominanceMinCoverage},
                  {"transitions", transition_json(states, w.transition, w.transition_counts)}};
    if (c) {
      entry["raw_expected_days"] = by_state(states, w.expected_days);
      entry["raw_dominance"] = by_state(states, w.dominance);
      entry["calibrated_expected_days"] = entry["expected_days"];
      entry["calibrated_dominance"] = entry["dominance"];
      entry["calibration_coefficient"] = c->coefficient;
      entry["climatological_dominance"] = by_state(states, c->climatology.dominance);
      entry["climatological_expected_days"] = by_state(states, c->climatology.expected_days);
      entry["climatology_month"] = c->climatology.whole_season ? json(nullptr) : json(c->month);
    }
    windows.push_back(entry);
  }
  return windows;
}

// Which probabilities the headline keys hold, and the calibration behind them.
json calibration_json(const std::optional<CalibratedGuidance>& cal, const std::vector<std::string>& states) {
  if (!cal) return {{"applied", false}, {"headline", "raw"}};
  const Calibration& c = cal->calibration;
  json skill = json::array();
  for (const auto& s : c.scores)
    skill.push_back({{"first_lead_days", s.first}, {"last_lead_days", s.last}, {"cases", s.cases},
                     {"method", calibration_method_name(c.method_at(s.first))},
                     {"skill_raw", number_or_null(s.skill_raw)}, {"skill_calibrated", number_or_null(s.skill_calibrated)},
                     {"reliability_raw", number_or_null(s.reliability_raw)},
                     {"reliability_calibrated", number_or_null(s.reliability_calibrated)}});
  json j = {{"applied", true},
            {"headline", "calibrated"},
            {"file", c.path},
            {"sha256", c.sha256},
            {"format_version", c.format_version},
            {"method", calibration_method_name(c.method)},
            {"regime_model_file", c.model_file},
            {"reforecast_years", c.years},
            {"reforecast_ensemble_members", c.ensemble_members},
            {"cross_validated_skill", skill},
            {"states", states}};
  if (!cal->ensemble_note.empty()) j["note"] = cal->ensemble_note;
  return j;
}

// The chance of lasting 3, 5, 7 days: the ensemble's for the spell under way
// at the issue date, the record's (with the age and the cases behind it) and
// the Markov chain's p_kk^n, each per state.
json lasting_json(const WindowStatistics& s, const PersistenceClimatology& c, const std::vector<std::string>& states) {
  if (c.record.size() != static_cast<std::size_t>(s.n_states) || c.horizons != s.lasting.horizons)
    throw InternalError("guidance document: persistence climatology of " + std::to_string(c.record.size()) +
                        " states and other horizons than the forecast's");
  json forecast = json::object(), members = json::object(), record = json::object(), cases = json::object(),
       ages = json::object(), asked = json::object(), markov = json::object();
  for (int st = 0; st < s.n_states; ++st) {
    const std::string name = state_name(states, st);
    forecast[name] = vec_json(s.lasting.probability.row(st).t());
    members[name] = json::array();
    for (arma::uword h = 0; h < s.lasting.cases.n_cols; ++h)
      members[name].push_back(static_cast<int>(s.lasting.cases(st, h)));
    record[name] = cases[name] = ages[name] = json::array();
    for (const EmpiricalLasting& e : c.record[st]) {
      record[name].push_back(number_or_null(e.probability));
      cases[name].push_back(e.cases);
      ages[name].push_back(e.age_days > 0 ? json(e.age_days) : json(nullptr));
    }
    asked[name] = c.requested_age[st] > 0 ? json(c.requested_age[st]) : json(nullptr);
    markov[name] = vec_json(c.markov.row(st).t());
  }
  return {{"horizons_days", s.lasting.horizons}, {"forecast", forecast}, {"forecast_members", members},
          {"climatological", record}, {"climatological_cases", cases}, {"climatological_age_days", ages},
          {"spell_age_days", asked}, {"min_age_cases", kMinAgeCases}, {"markov_climatological", markov}};
}

json persistence_json(const GuidanceParts& parts, const Date& issue, const std::vector<std::string>& states) {
  json ages = json::array();
  for (const auto& a : parts.statistics.current_age)
    ages.push_back({{"lead_days", a.offset}, {"valid_date", to_string(add_days(issue, a.offset))},
                    {"probability", vec_json(a.probability)}, {"mean_age_days", a.mean_age}});
  json now = nullptr;
  if (const auto& observed = parts.observed)
    now = {{"regime", state_name(states, observed->state)}, {"age_days", observed->age_days},
           {"as_of", to_string(observed->as_of)}, {"source", observed->source}};
  return {{"current_age", ages},
          {"current_age_bins", "probability[i] is for age i+1 days; the last bin is that age or more"},
          {"lasting", lasting_json(parts.statistics, parts.persistence, states)},
          {"observed", now}};
}

json provenance_json(const RegimeModel& model, const LaggedEnsemble& e, const ModelClimate& climate,
                     const ClassifyConfig& cfg) {
  return {{"tool", "isohypse"},
          {"version", ISOHYPSE_VERSION},
          {"created", utc_timestamp_now()},
          {"model", {{"path", model.path}, {"sha256", model.sha256}, {"format_version", model.format_version}}},
          {"forecast_files", e.forecast_files},
          {"reforecast_files_read", climate.reforecast_files_read},
          {"analysis_files", cfg.analysis}};
}

}  // namespace

json guidance_document(const RegimeModel& model, const ClassifyConfig& cfg, const GuidanceParts& parts) {
  const std::vector<std::string> states = model_states(model);
  const LaggedEnsemble& e = parts.ensemble;
  if (parts.statistics.n_states != static_cast<int>(states.size()))
    throw InternalError("guidance document: statistics of " + std::to_string(parts.statistics.n_states) +
                        " states for a model of " + std::to_string(states.size()));
  json g;
  g["format"] = "isohypse-guidance";
  g["format_version"] = kGuidanceFormatVersion;
  g["caution"] = kCaution;
  g["issue_date"] = to_string(e.issue);
  g["regimes"] = regimes_json(model);
  g["states"] = states;
  g["ensemble"] = ensemble_json(e, cfg);
  g["bias_correction"] = bias_correction_json(parts.climate, cfg);
  g["calibration"] = calibration_json(parts.calibrated, states);
  g["daily"] = daily_json(parts.statistics, e, states, parts.calibrated);
  g["windows"] = windows_json(parts.statistics, e.issue, states, parts.calibrated);
  g["persistence"] = persistence_json(parts, e.issue, states);
  g["transitions"] = {
      {"climatological",
       transition_json(states, model.transition, arma::conv_to<arma::mat>::from(model.transition_counts))}};
  if (cfg.member_detail) {
    json members = json::array();
    for (auto& d : parts.labels.detail) members.push_back(std::move(d));
    g["members"] = std::move(members);
  }
  g["provenance"] = provenance_json(model, e, parts.climate, cfg);
  return g;
}

}  // namespace isohypse
