#include "isohypse/stages/guidance_text.hpp"

#include <cmath>
#include <cstdio>
#include <map>
#include <sstream>

#include "isohypse/base/vocabulary.hpp"

namespace isohypse {

namespace {

using json = nlohmann::json;

std::string ensemble_lines(const json& g) {
  std::ostringstream o;
  o << "Regime guidance issued " << g.at("issue_date").get<std::string>() << " from "
    << g.at("ensemble").at("members").get<int>() << " members of " << g.at("ensemble").at("lag").get<int>()
    << " initialisations (weights " << g.at("ensemble").at("weights").get<std::string>() << ")\n";
  o << (g.at("bias_correction").at("applied").get<bool>() ? "Model drift removed with reforecasts.\n"
                                                           : "No reforecasts: model drift NOT removed.\n");
  if (g.contains("calibration") && g.at("calibration").value("applied", false)) {
    const json& c = g.at("calibration");
    o << "Probabilities calibrated (" << c.at("method").get<std::string>() << ", fitted on reforecasts of "
      << c.at("reforecast_years").size() << " years; raw ones beside them in the JSON and *_raw.csv).\n";
    if (c.contains("note")) o << "Note: " << c.at("note").get<std::string>() << ".\n";
  } else {
    o << "Probabilities raw (no --calibration): weighted member fractions, often over-confident at long leads.\n";
  }
  const json& obs = g.at("persistence").at("observed");
  if (!obs.is_null()) {
    const int age = obs.at("age_days").get<int>();
    o << "Observed regime " << obs.at("regime").get<std::string>() << " for " << age << (age == 1 ? " day" : " days")
      << " as of " << obs.at("as_of").get<std::string>() << " (" << obs.at("source").get<std::string>() << ")\n";
  }
  return o.str();
}

// "62/40/22%": one value per horizon, a dash where there is none.
std::string percents(const json& values) {
  std::string out;
  for (const auto& v : values) {
    if (!out.empty()) out += "/";
    out += v.is_null() ? "-" : std::to_string(static_cast<int>(std::lround(100 * v.get<double>())));
  }
  return out + "%";
}

// The chance that the spell under way lasts: of the observed regime, else of
// the most likely state on the issue date (lead 0).
std::string persistence_lines(const json& g) {
  const json& p = g.at("persistence");
  std::string st;
  if (!p.at("observed").is_null()) st = p.at("observed").at("regime").get<std::string>();
  for (const auto& d : g.at("daily"))
    if (st.empty() && d.at("lead_days").get<int>() == 0) st = d.at("most_likely").get<std::string>();
  if (st.empty()) return "";
  const json& l = p.at("lasting");
  if (!l.at("forecast").contains(st)) return "";
  std::string hz, age;
  for (const auto& h : l.at("horizons_days")) hz += (hz.empty() ? "" : "/") + std::to_string(h.get<int>());
  for (const auto& a : l.at("climatological_age_days").at(st))
    if (!a.is_null()) age = ", spell age " + std::to_string(a.get<int>()) + " d";
  std::ostringstream o;
  o << "Spell of " << st << " under way: lasts " << hz << " more days: forecast "
    << percents(l.at("forecast").at(st)) << ", record " << percents(l.at("climatological").at(st)) << age
    << ", Markov " << percents(l.at("markov_climatological").at(st)) << "\n";
  return o.str();
}

// One line per window: the state most likely to dominate it, its probability
// and the members behind it (counted, and the initialisations they come from).
std::string window_lines(const json& g) {
  std::map<std::string, std::string> names;
  for (const auto& r : g.at("regimes")) names[r.at("id")] = r.at("name");
  names[kNoRegimeState] = kNoRegimeName;
  std::ostringstream o;
  char line[256];
  o << "\nwindow (lead days)   most likely to dominate                      probability  members\n";
  for (const auto& w : g.at("windows")) {
    std::string best;
    double bp = -1;
    for (const auto& [s, p] : w.at("dominance").items())
      if (!p.is_null() && p.get<double>() > bp) {
        bp = p.get<double>();
        best = s;
      }
    // No member covers enough of the window: no state and no probability to name.
    const std::string probability = bp < 0 ? "-" : std::to_string(static_cast<int>(std::lround(100 * bp))) + "%";
    const int inits = w.at("initialisations").get<int>();
    std::snprintf(line, sizeof line, "%3d-%-3d %s..%s  %-4s %-40.40s %11s  %d from %d initialisation%s\n",
                  w.at("first_lead_days").get<int>(), w.at("last_lead_days").get<int>(),
                  w.at("from").get<std::string>().substr(5).c_str(), w.at("to").get<std::string>().substr(5).c_str(),
                  bp < 0 ? "-" : best.c_str(), bp < 0 ? "no member covers enough of the window" : names[best].c_str(),
                  probability.c_str(), w.at("members").get<int>(), inits, inits == 1 ? "" : "s");
    o << line;
  }
  if (!g.at("windows").empty())
    o << "(members: those covering at least " << std::lround(100 * g.at("windows")[0].at("min_coverage").get<double>())
      << "% of a window's days, each with its most frequent regime over the days it covers)\n";
  return o.str();
}

}  // namespace

std::string guidance_text(const json& g) {
  return ensemble_lines(g) + persistence_lines(g) + window_lines(g) + "\n" + g.at("caution").get<std::string>() + "\n";
}

}  // namespace isohypse
