#include "isohypse/stages/derive_config.hpp"

#include <algorithm>
#include <cstdint>

#include "isohypse/base/error.hpp"
#include "isohypse/base/json_config.hpp"
#include "isohypse/numerics/regime_significance.hpp"

namespace isohypse {

namespace {

using json = nlohmann::json;

// "LAT_MIN,LAT_MAX,LON_WEST,LON_EAST" or an array of 4 numbers.
Domain domain_from_json(const json& d, const std::string& src) {
  if (d.is_string()) return Domain::parse(d.get<std::string>(), src + ": domain");
  if (d.is_array() && d.size() == 4 && std::all_of(d.begin(), d.end(), [](const json& x) { return x.is_number(); }))
    return Domain::parse(std::to_string(d[0].get<double>()) + "," + std::to_string(d[1].get<double>()) + "," +
                             std::to_string(d[2].get<double>()) + "," + std::to_string(d[3].get<double>()),
                         src + ": domain");
  throw InputError(src + ": domain must be \"LAT_MIN,LAT_MAX,LON_WEST,LON_EAST\" or an array of 4 numbers");
}

void eof_from_json(const json& e, const std::string& src, EofOptions& eof) {
  const std::string w = src + ": eof";
  check_keys(e, {"count", "variance_fraction", "max_count", "method"}, w);
  get_value(e, "count", eof.count, w);
  get_value(e, "variance_fraction", eof.variance_fraction, w);
  get_value(e, "max_count", eof.max_count, w);
  std::string method = "auto";
  get_value(e, "method", method, w);
  if (method == "auto") eof.method = EofOptions::Method::Automatic;
  else if (method == "exact") eof.method = EofOptions::Method::Exact;
  else if (method == "randomized") eof.method = EofOptions::Method::Randomized;
  else throw InputError(src + ": eof.method '" + method + "' (valid: auto, exact, randomized)");
}

const char* eof_method_name(EofOptions::Method m) {
  return m == EofOptions::Method::Exact ? "exact" : m == EofOptions::Method::Randomized ? "randomized" : "auto";
}

void regimes_from_json(const json& r, const std::string& src, DeriveConfig& c) {
  const std::string w = src + ": regimes";
  check_keys(r, {"k", "k_min", "k_max", "restarts", "classifiability_runs", "surrogates", "significance", "stop_early", "names"}, w);
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
  get_value(r, "stop_early", c.stop_early, w);
  get_value(r, "names", c.names, w);
}

}  // namespace

DeriveConfig DeriveConfig::from_json(const json& j, const std::string& src) {
  DeriveConfig c;
  check_keys(j, {"inputs", "variable", "level_hpa", "domain", "daily_mean", "months", "climatology", "filter", "eof",
                 "regimes", "no_regime_threshold", "seed", "threads", "comment"},
             src);
  get_string_list(j, "inputs", c.inputs, src);
  get_value(j, "variable", c.variable, src);
  get_value(j, "level_hpa", c.level_hpa, src);
  if (j.contains("domain")) c.domain = domain_from_json(j["domain"], src);
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
  if (j.contains("eof")) eof_from_json(j["eof"], src, c.eof);
  if (j.contains("regimes")) regimes_from_json(j["regimes"], src, c);
  get_value(j, "no_regime_threshold", c.no_regime_threshold, src);
  // A negative seed would wrap around to a huge one: refused by name.
  if (j.contains("seed") && !j["seed"].is_number_unsigned())
    throw InputError(src + ": seed must be a whole number 0.." + std::to_string(UINT64_MAX) + " (got " +
                     j["seed"].dump() + ")");
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
  j["eof"] = {{"count", eof.count}, {"variance_fraction", eof.variance_fraction}, {"max_count", eof.max_count},
              {"method", eof_method_name(eof.method)}};
  j["regimes"] = {{"k", k ? json(*k) : json("auto")}, {"k_min", k_min}, {"k_max", k_max}, {"restarts", restarts},
                  {"classifiability_runs", classifiability_runs}, {"surrogates", surrogates},
                  {"significance", significance}, {"stop_early", stop_early}, {"names", names}};
  j["no_regime_threshold"] = no_regime_threshold;
  j["seed"] = seed;
  j["threads"] = threads;
  return j;
}

void DeriveConfig::validate() const {
  auto bad = [](const std::string& m) { throw InputError(m); };
  if (inputs.empty()) bad("no input files: give --input PATH_OR_GLOB or \"inputs\" in the config");
  if (!(level_hpa > 0 && level_hpa <= 1100))
    bad("level_hpa (--level) = " + json(level_hpa).dump() + ": a pressure level must lie in (0, 1100] hPa");
  if (months.empty()) bad("months: the season has no months");
  for (int m : months)
    if (m < 1 || m > 12) bad("months (--months): " + std::to_string(m) + " is not a month (1..12)");
  if (k && (*k < 1 || *k > 30)) bad("k = " + std::to_string(*k) + " (allowed 1..30, or auto)");
  if (k_min < 2 || k_max < k_min || k_max > 30)
    bad("k range " + std::to_string(k_min) + ".." + std::to_string(k_max) + " (need 2 <= k_min <= k_max <= 30)");
  if (restarts < 1) bad("restarts must be at least 1");
  if (classifiability_runs < 3) bad("classifiability_runs must be at least 3 (the index's spread leaves one out)");
  if (surrogates < 1) bad("surrogates must be at least 1");
  if (!(significance > 0 && significance < 1)) bad("significance must lie between 0 and 1");
  const int needed = minimum_surrogates(k_max - k_min + 1, significance);
  if (!k && surrogates < needed)
    bad("surrogates = " + std::to_string(surrogates) + " is too few for k = auto: testing " +
        std::to_string(k_max - k_min + 1) + " values of k at significance " + json(significance).dump() +
        " needs at least " + std::to_string(needed) +
        " (the smallest p-value is 1/(surrogates + 1)); use the default 100 or fix k");
  if (!(no_regime_threshold >= -1 && no_regime_threshold <= 1)) bad("no_regime_threshold must lie in -1..1");
  if (eof.count < 0) bad("eof.count must be 0 (by variance) or positive");
  if (!(eof.variance_fraction > 0 && eof.variance_fraction <= 1)) bad("eof.variance_fraction must lie in (0, 1]");
  if (running_mean_days < 0 || running_mean_days > 31) bad("filter.running_mean_days must lie in 0..31");
  if (threads < 0) bad("threads (--threads) must be 0 (all cores) or positive");
  if (!names.empty() && k && static_cast<int>(names.size()) != *k)
    bad("regimes.names has " + std::to_string(names.size()) + " names for k = " + std::to_string(*k));
}

}  // namespace isohypse
