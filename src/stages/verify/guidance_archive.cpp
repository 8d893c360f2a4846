#include "stages/verify/guidance_archive.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <nlohmann/json.hpp>

#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/reader.hpp"
#include "isohypse/stages/classify.hpp"

namespace isohypse::verification {

namespace {

using json = nlohmann::json;
namespace fs = std::filesystem;

// What a guidance file holds is data: everything wrong inside it is a
// DataError naming the file (and the entry), never a JSON library exception.
[[noreturn]] void bad_guidance(const std::string& file, const std::string& what) {
  throw DataError(file + ": " + what);
}

std::string type_of(const json& v) {
  if (v.is_null()) return "null";
  if (v.is_string()) return "a string";
  if (v.is_boolean()) return "a boolean";
  if (v.is_number()) return "a number";
  if (v.is_array()) return "a list";
  return "an object";
}

json parse_guidance_json(const std::string& file) {
  try {
    return json::parse(read_file(file));
  } catch (const json::parse_error& e) {
    bad_guidance(file, "not valid JSON at byte " + std::to_string(e.byte));
  }
}

// The member `key` of `object` (named `owner` in the message).
const json& member(const json& object, const std::string& key, const std::string& file, const std::string& owner) {
  auto it = object.find(key);
  if (it == object.end()) bad_guidance(file, owner + " has no '" + key + "'");
  return *it;
}

Date date_value(const json& v, const std::string& file, const std::string& what) {
  if (!v.is_string()) bad_guidance(file, what + " is " + type_of(v) + ", not a date");
  try {
    return parse_date(v.get<std::string>(), Calendar::ProlepticGregorian, file + ": " + what);
  } catch (const InputError& e) {
    throw DataError(e.what());  // a date inside a file is data, not the user's input
  }
}

// The regime model the guidance was made with, and its states, must be this one.
void check_same_model(const json& g, const std::string& file, const RegimeModel& model,
                      const std::vector<std::string>& states) {
  const json::json_pointer sha_at("/provenance/model/sha256");
  if (!g.contains(sha_at) || !g.at(sha_at).is_string())
    bad_guidance(file, "guidance has no 'provenance.model.sha256' (the regime model it was made with)");
  const std::string sha = g.at(sha_at).get<std::string>();
  if (sha != model.sha256)
    throw InputError(file + ": guidance from another regime model (its model " + sha.substr(0, 12) +
                     "..., this model " + model.sha256.substr(0, 12) + "... " + model.path + ")");
  const json& listed = member(g, "states", file, "guidance");
  if (listed != json(states))
    throw InputError(file + ": its regime states " + listed.dump() + " differ from the model's");
}

int lead_value(const json& v, const std::string& file, const std::string& owner, const std::string& key = "lead_days") {
  if (!v.is_number() || std::floor(v.get<double>()) != v.get<double>() || std::abs(v.get<double>()) > 1e6)
    bad_guidance(file, owner + ": " + key + " is " + (v.is_number() ? v.dump() : type_of(v)) + ", not a whole number");
  return v.get<int>();
}

// The by-state probabilities under `key` of a daily entry; a null reads as 0.
arma::vec daily_probabilities(const json& e, const std::string& key, const std::string& file,
                              const std::string& owner, const std::vector<std::string>& states) {
  const json& probabilities = member(e, key, file, owner);
  if (!probabilities.is_object())
    bad_guidance(file, owner + ": " + key + " is " + type_of(probabilities) + ", not an object");
  arma::vec p(states.size());
  const std::string what = key == "probabilities" ? "probability" : key;
  for (std::size_t s = 0; s < states.size(); ++s) {
    const json& x = member(probabilities, states[s], file, owner + " " + key);
    if (!x.is_null() && !x.is_number())
      bad_guidance(file, owner + ": " + what + " of '" + states[s] + "' is " + type_of(x) + ", not a number");
    p(s) = x.is_null() ? 0.0 : x.get<double>();
  }
  return p;
}

// A key a calibrated issue must give beside its headline.
void require_raw(const json& e, const std::string& key, const std::string& file, const std::string& owner) {
  if (!e.contains(key)) bad_guidance(file, owner + " has no '" + key + "' (its calibration is applied)");
}

DailyGuidance parse_daily(const json& e, std::size_t index, const std::string& file,
                          const std::vector<std::string>& states, bool calibrated) {
  const std::string owner = "daily[" + std::to_string(index) + "]";
  if (!e.is_object()) bad_guidance(file, owner + " is " + type_of(e) + ", not an object");
  DailyGuidance d;
  d.valid = date_value(member(e, "valid_date", file, owner), file, owner + ": valid_date");
  d.lead = lead_value(member(e, "lead_days", file, owner), file, owner);
  d.p = daily_probabilities(e, "probabilities", file, owner, states);
  if (calibrated) {
    require_raw(e, "raw_probabilities", file, owner);
    d.raw_p = daily_probabilities(e, "raw_probabilities", file, owner, states);
    d.raw_most_likely = static_cast<int>(d.raw_p.index_max());  // the first of equal highest, as classify's
  }
  const json& most_likely = member(e, "most_likely", file, owner);
  auto it = most_likely.is_string() ? std::find(states.begin(), states.end(), most_likely.get<std::string>())
                                    : states.end();
  if (it == states.end())
    bad_guidance(file, owner + ": most_likely " + most_likely.dump() + " is not one of the states");
  d.most_likely = static_cast<int>(it - states.begin());
  return d;
}

// A by-state object of a window ("dominance" or "expected_days"): one value
// per state, a number or null (NaN here). `probability`: each in [0, 1]
// (a rounding excess of 1e-9 is clipped), else >= 0.
arma::vec by_state_values(const json& object, const std::string& key, bool probability, const std::string& file,
                          const std::string& owner, const std::vector<std::string>& states) {
  if (!object.is_object()) bad_guidance(file, owner + ": " + key + " is " + type_of(object) + ", not an object");
  arma::vec v(states.size());
  for (std::size_t s = 0; s < states.size(); ++s) {
    const json& x = member(object, states[s], file, owner + " " + key);
    if (!x.is_null() && !x.is_number())
      bad_guidance(file, owner + ": " + key + " of '" + states[s] + "' is " + type_of(x) + ", not a number");
    v(s) = x.is_null() ? NAN : x.get<double>();
    const double top = probability ? 1.0 + 1e-9 : 1e9;
    if (!x.is_null() && !(v(s) >= -1e-9 && v(s) <= top))
      bad_guidance(file, owner + ": " + key + " of '" + states[s] + "' is " + x.dump() +
                             (probability ? ", not a probability in 0..1" : ", not a number of days >= 0"));
    if (!x.is_null()) v(s) = probability ? std::clamp(v(s), 0.0, 1.0) : std::max(v(s), 0.0);
  }
  return v;
}

// A window's dominance under `key`: empty when null or null for every state
// (no member covers enough of the window); null for some states only is a broken file.
arma::vec dominance_values(const json& e, const std::string& key, const std::string& file, const std::string& owner,
                           const std::vector<std::string>& states) {
  const json& dominance = member(e, key, file, owner);
  if (dominance.is_null()) return {};
  arma::vec v = by_state_values(dominance, key, true, file, owner, states);
  auto is_null = [](double x) { return std::isnan(x); };
  const auto nulls = static_cast<std::size_t>(std::count_if(v.begin(), v.end(), is_null));
  if (nulls == states.size()) v.reset();
  if (nulls > 0 && nulls < states.size())
    bad_guidance(file, owner + ": " + key + " is null for some states and not for others");
  return v;
}

arma::vec expected_days_values(const json& e, const std::string& key, const std::string& file,
                               const std::string& owner, const std::vector<std::string>& states) {
  arma::vec v = by_state_values(member(e, key, file, owner), key, false, file, owner, states);
  return v.replace(arma::datum::nan, 0.0);
}

WindowGuidance parse_window(const json& e, std::size_t index, const std::string& file,
                            const std::vector<std::string>& states, bool calibrated) {
  const std::string owner = "windows[" + std::to_string(index) + "]";
  if (!e.is_object()) bad_guidance(file, owner + " is " + type_of(e) + ", not an object");
  WindowGuidance w;
  w.first_lead = lead_value(member(e, "first_lead_days", file, owner), file, owner, "first_lead_days");
  w.last_lead = lead_value(member(e, "last_lead_days", file, owner), file, owner, "last_lead_days");
  w.from = date_value(member(e, "from", file, owner), file, owner + ": from");
  w.to = date_value(member(e, "to", file, owner), file, owner + ": to");
  const std::int64_t span = days_between(w.from, w.to) + 1;
  if (w.last_lead < w.first_lead || span != w.last_lead - w.first_lead + 1)
    bad_guidance(file, owner + ": from " + to_string(w.from) + " to " + to_string(w.to) + " spans " +
                           std::to_string(span) + " days, not the " + std::to_string(w.last_lead - w.first_lead + 1) +
                           " of lead days " + std::to_string(w.first_lead) + "-" + std::to_string(w.last_lead));
  w.members = lead_value(member(e, "members", file, owner), file, owner, "members");
  w.dominance = dominance_values(e, "dominance", file, owner, states);
  w.expected_days = expected_days_values(e, "expected_days", file, owner, states);
  if (calibrated) {
    require_raw(e, "raw_dominance", file, owner);
    require_raw(e, "raw_expected_days", file, owner);
    w.raw_dominance = dominance_values(e, "raw_dominance", file, owner, states);
    w.raw_expected_days = expected_days_values(e, "raw_expected_days", file, owner, states);
  }
  return w;
}

// Days spanned by ensemble.initialisations[].age_days (the moving-block
// bootstrap's default block is this span + 7); 1 when no ensemble is listed.
int lag_span_value(const json& g, const std::string& file) {
  const json::json_pointer at("/ensemble/initialisations");
  if (!g.contains(at)) return 1;
  const json& inits = g.at(at);
  if (!inits.is_array()) bad_guidance(file, "ensemble.initialisations is " + type_of(inits) + ", not a list");
  int oldest = 0, newest = 0;
  for (std::size_t i = 0; i < inits.size(); ++i) {
    const std::string owner = "ensemble.initialisations[" + std::to_string(i) + "]";
    if (!inits[i].is_object()) bad_guidance(file, owner + " is " + type_of(inits[i]) + ", not an object");
    const json& age = member(inits[i], "age_days", file, owner);
    if (!age.is_number() || std::floor(age.get<double>()) != age.get<double>() || std::abs(age.get<double>()) > 1e6)
      bad_guidance(file, owner + ": age_days is " + (age.is_number() ? age.dump() : type_of(age)) +
                             ", not a whole number");
    oldest = i == 0 ? age.get<int>() : std::max(oldest, age.get<int>());
    newest = i == 0 ? age.get<int>() : std::min(newest, age.get<int>());
  }
  return inits.empty() ? 1 : oldest - newest + 1;
}

// "calibration.applied" of format version 4; false without a "calibration" object (older versions).
bool calibration_applied(const json& g, const std::string& file) {
  auto c = g.find("calibration");
  if (c == g.end()) return false;
  if (!c->is_object()) bad_guidance(file, "calibration is " + type_of(*c) + ", not an object");
  const json& applied = member(*c, "applied", file, "calibration");
  if (!applied.is_boolean()) bad_guidance(file, "calibration: applied is " + type_of(applied) + ", not a boolean");
  return applied.get<bool>();
}

// Versions 1-3 (before calibration) are read on purpose: a season's archive
// may span an upgrade. A later version, or none, is refused by name.
void check_format_version(const json& g, const std::string& file) {
  const json& v = member(g, "format_version", file, "guidance");
  if (!v.is_number_integer() || v.get<long long>() < 1 || v.get<long long>() > kGuidanceFormatVersion)
    bad_guidance(file, "format_version is " + v.dump() + "; this isohypse reads guidance of format versions 1 to " +
                           std::to_string(kGuidanceFormatVersion) + " (a later version needs a later isohypse)");
}

GuidanceIssue parse_issue(const json& g, const std::string& file, const std::vector<std::string>& states) {
  check_format_version(g, file);
  GuidanceIssue issue;
  issue.file = file;
  issue.issue = date_value(member(g, "issue_date", file, "guidance"), file, "issue_date");
  issue.calibrated = calibration_applied(g, file);
  auto daily = g.find("daily");
  if (daily == g.end() || !daily->is_array()) bad_guidance(file, "guidance has no 'daily' list");
  for (std::size_t i = 0; i < daily->size(); ++i)
    issue.daily.push_back(parse_daily((*daily)[i], i, file, states, issue.calibrated));
  issue.lag_span_days = lag_span_value(g, file);
  auto windows = g.find("windows");
  if (windows != g.end() && !windows->is_array())
    bad_guidance(file, "windows is " + type_of(*windows) + ", not a list");
  if (windows != g.end())
    for (std::size_t i = 0; i < windows->size(); ++i)
      issue.windows.push_back(parse_window((*windows)[i], i, file, states, issue.calibrated));
  return issue;
}

}  // namespace

std::vector<std::string> guidance_files(const std::vector<std::string>& paths) {
  std::vector<std::string> out;
  for (const auto& a : paths) {
    std::error_code ec;
    if (fs::is_directory(a, ec)) {
      std::vector<std::string> in_dir;
      for (const auto& e : fs::directory_iterator(a))
        if (e.is_regular_file() && e.path().extension() == ".json" && e.path().filename().string()[0] != '.')
          in_dir.push_back(e.path().string());
      std::sort(in_dir.begin(), in_dir.end());
      out.insert(out.end(), in_dir.begin(), in_dir.end());
    } else {
      for (const auto& p : expand_paths({a})) out.push_back(p);
    }
  }
  return out;
}

GuidanceSet load_guidance(const RegimeModel& model, const std::vector<std::string>& states,
                          const std::vector<std::string>& paths) {
  const std::vector<std::string> files = guidance_files(paths);
  if (files.empty()) throw InputError("no guidance files found in " + json(paths).dump() + " (empty archive)");
  GuidanceSet set;
  for (const auto& file : files) {
    const json g = parse_guidance_json(file);
    if (!g.is_object() || !g.contains("format") || g["format"] != "isohypse-guidance")
      bad_guidance(file, "not isohypse guidance (no \"format\": \"isohypse-guidance\")");
    check_same_model(g, file, model, states);
    set.issues.push_back(parse_issue(g, file, states));
  }
  return set;
}

}  // namespace isohypse::verification
