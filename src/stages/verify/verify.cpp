#include "isohypse/stages/verify.hpp"
#include "isohypse/base/vocabulary.hpp"

#include <algorithm>
#include <cmath>
#include <ctime>
#include <filesystem>
#include <map>
#include <set>
#include <sstream>

#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/stages/observed.hpp"
#include "isohypse/io/reader.hpp"
#include "isohypse/numerics/scores.hpp"

namespace isohypse {

namespace {

using json = nlohmann::json;
namespace fs = std::filesystem;

struct Case {
  int issue = 0;      // index of the guidance document
  int lead = 0;
  std::int64_t valid = 0;  // day number, real calendar
  int month = 0;
  arma::vec p;        // n_states
  int most_likely = 0;
  int observed = 0;
};

json num(double x) { return number_or_null(x); }

std::vector<std::string> guidance_files(const std::vector<std::string>& args) {
  std::vector<std::string> out;
  for (const auto& a : args) {
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

// Scores of one set of cases.
struct BlockScores {
  std::size_t n = 0;
  double hit_rate = NAN, hss = NAN, mcbs = NAN, mcbss = NAN;
};

BlockScores block_scores(const std::vector<Case>& cases, const std::vector<std::size_t>& idx, const arma::vec& clim,
                         int n_states) {
  BlockScores b;
  b.n = idx.size();
  if (idx.empty()) return b;
  std::vector<int> fc, ob;
  double hits = 0, mcbs = 0, mcbs_clim = 0;
  for (auto i : idx) {
    const Case& c = cases[i];
    fc.push_back(c.most_likely);
    ob.push_back(c.observed);
    hits += c.most_likely == c.observed;
    mcbs += multicategory_brier(c.p.t(), c.observed);
    mcbs_clim += multicategory_brier(clim.t(), c.observed);
  }
  b.hit_rate = hits / double(idx.size());
  b.hss = heidke_skill(contingency(fc, ob, n_states));
  b.mcbs = mcbs / double(idx.size());
  b.mcbss = skill_score(b.mcbs, mcbs_clim / double(idx.size()));
  return b;
}

json regime_scores(const std::vector<Case>& cases, const std::vector<std::size_t>& idx, const arma::vec& clim,
                   const std::vector<std::string>& states) {
  json out = json::object();
  for (std::size_t s = 0; s < states.size(); ++s) {
    arma::vec p(idx.size()), o(idx.size());
    for (std::size_t j = 0; j < idx.size(); ++j) {
      p(j) = cases[idx[j]].p(s);
      o(j) = cases[idx[j]].observed == static_cast<int>(s) ? 1.0 : 0.0;
    }
    BrierParts parts = brier_decomposition(p, o);
    arma::vec pc(idx.size());
    pc.fill(clim(s));
    double bs_clim = brier_score(pc, o);
    out[states[s]] = {{"brier", parts.brier},           {"reliability", parts.reliability},
                      {"resolution", parts.resolution}, {"uncertainty", parts.uncertainty},
                      {"base_rate", parts.base_rate},   {"brier_skill", num(skill_score(parts.brier, bs_clim))},
                      {"roc_area", num(roc_area(p, o))}};
  }
  return out;
}

json reliability_json(const std::vector<Case>& cases, const std::vector<std::size_t>& idx, std::size_t n_states) {
  arma::vec p(idx.size() * n_states), o(idx.size() * n_states);
  std::size_t j = 0;
  for (auto i : idx)
    for (std::size_t s = 0; s < n_states; ++s, ++j) {
      p(j) = cases[i].p(s);
      o(j) = cases[i].observed == static_cast<int>(s);
    }
  json bins = json::array();
  for (const auto& b : reliability_diagram(p, o, 10))
    bins.push_back({{"lower", b.lower}, {"upper", b.upper}, {"mean_forecast", num(b.mean_forecast)},
                    {"observed_frequency", num(b.observed_frequency)}, {"count", b.count}});
  return bins;
}

json frequency_bias_json(const std::vector<Case>& cases, const std::vector<std::size_t>& idx,
                         const std::vector<std::string>& states) {
  arma::vec fc(states.size(), arma::fill::zeros), ob(states.size(), arma::fill::zeros);
  for (auto i : idx) {
    fc += cases[i].p;
    ob(cases[i].observed) += 1;
  }
  json out = json::object();
  for (std::size_t s = 0; s < states.size(); ++s)
    out[states[s]] = {{"forecast_days", fc(s)}, {"observed_days", ob(s)}, {"bias", num(ob(s) > 0 ? fc(s) / ob(s) : NAN)}};
  return out;
}

}  // namespace

json verify_guidance(const RegimeModel& model, const VerifyConfig& cfg) {
  const int k = model.k(), n_states = k + 1;
  const std::vector<std::string> states = model_states(model);
  arma::vec clim(n_states);
  double regime_sum = 0;
  for (int r = 0; r < k; ++r) regime_sum += (clim(r) = model.regimes[r].frequency);
  clim(k) = std::max(0.0, 1.0 - regime_sum);

  // 1. Guidance.
  std::vector<std::string> files = guidance_files(cfg.guidance);
  if (files.empty()) throw InputError("no guidance files found in " + json(cfg.guidance).dump() + " (empty archive)");
  std::vector<json> docs;
  std::vector<Date> issues;
  for (const auto& f : files) {
    json g;
    try {
      g = json::parse(read_file(f));
    } catch (const json::parse_error& e) {
      throw DataError(f + ": not valid JSON: " + e.what());
    }
    if (g.value("format", "") != "isohypse-guidance")
      throw DataError(f + ": not isohypse guidance (no \"format\": \"isohypse-guidance\")");
    std::string sha = g.at("provenance").at("model").value("sha256", "");
    if (sha != model.sha256)
      throw InputError(f + ": guidance from another regime model (its model " + sha.substr(0, 12) + "..., this model " +
                       model.sha256.substr(0, 12) + "... " + model.path + ")");
    if (g.at("states") != json(states))
      throw InputError(f + ": its regime states " + g.at("states").dump() + " differ from the model's");
    issues.push_back(parse_date(g.at("issue_date").get<std::string>(), Calendar::ProlepticGregorian, f));
    docs.push_back(std::move(g));
  }

  // 2. Observations.
  ObservedSequence obs = cfg.observed.empty() ? observed_from_model(model)
                                              : observed_from_files(model, cfg.observed, cfg.variable, cfg.from, cfg.to);
  std::map<std::int64_t, int> observed;
  for (std::size_t t = 0; t < obs.dates.size(); ++t) observed[day_number(obs.dates[t])] = obs.labels[t];

  // 3. Cases.
  const std::int64_t from = cfg.from ? day_number(*cfg.from) : std::numeric_limits<std::int64_t>::min();
  const std::int64_t to = cfg.to ? day_number(*cfg.to) : std::numeric_limits<std::int64_t>::max();
  std::vector<Case> cases;
  int max_lead = 0;
  for (std::size_t g = 0; g < docs.size(); ++g)
    for (const auto& e : docs[g].at("daily")) {
      Date v = parse_date(e.at("valid_date").get<std::string>(), Calendar::ProlepticGregorian, files[g]);
      std::int64_t dn = day_number(v);
      if (dn < from || dn > to) continue;
      auto it = observed.find(dn);
      if (it == observed.end()) continue;
      Case c;
      c.issue = static_cast<int>(g);
      c.lead = e.at("lead_days").get<int>();
      c.valid = dn;
      c.month = v.month;
      c.p.set_size(n_states);
      for (int s = 0; s < n_states; ++s) {
        const json& x = e.at("probabilities").at(states[s]);
        c.p(s) = x.is_null() ? 0.0 : x.get<double>();
      }
      c.most_likely = static_cast<int>(std::find(states.begin(), states.end(), e.at("most_likely").get<std::string>()) -
                                       states.begin());
      c.observed = it->second;
      max_lead = std::max(max_lead, c.lead);
      cases.push_back(std::move(c));
    }
  if (cases.empty())
    throw InputError("no observations for the valid dates of the guidance" +
                     std::string(cfg.from || cfg.to ? " in the period asked" : "") + " (observations from " +
                     obs.source + (obs.dates.empty() ? ": none"
                                                      : " cover " + to_string(obs.dates.front()) + " to " +
                                                            to_string(obs.dates.back())) +
                     "); give --observed files for the season");

  // 4. Scores by lead and by window.
  auto blocks_of = [&](const std::vector<std::size_t>& idx) {
    std::vector<int> b;
    for (auto i : idx) b.push_back(cases[i].issue);
    return b;
  };
  auto interval = [&](const std::vector<std::size_t>& idx, int which) {
    auto stat = [&](const std::vector<std::size_t>& pick) {
      std::vector<std::size_t> sub;
      for (auto j : pick) sub.push_back(idx[j]);
      BlockScores b = block_scores(cases, sub, clim, n_states);
      return which == 0 ? b.hit_rate : which == 1 ? b.hss : b.mcbss;
    };
    Interval ci = block_bootstrap(blocks_of(idx), stat, cfg.bootstrap_resamples, cfg.confidence, cfg.seed);
    return json{{"estimate", num(ci.estimate)}, {"lower", num(ci.lower)}, {"upper", num(ci.upper)}};
  };
  json by_lead = json::array();
  for (int lead = 0; lead <= max_lead; ++lead) {
    std::vector<std::size_t> idx;
    for (std::size_t i = 0; i < cases.size(); ++i)
      if (cases[i].lead == lead) idx.push_back(i);
    if (idx.empty()) continue;
    BlockScores b = block_scores(cases, idx, clim, n_states);
    by_lead.push_back({{"lead_days", lead}, {"cases", b.n}, {"hit_rate", num(b.hit_rate)}, {"heidke", num(b.hss)},
                       {"multicategory_brier", num(b.mcbs)}, {"multicategory_brier_skill", num(b.mcbss)},
                       {"multicategory_brier_skill_interval", interval(idx, 2)},
                       {"regimes", regime_scores(cases, idx, clim, states)}});
  }
  json windows = json::array();
  for (const auto& [a, bnd] : cfg.windows) {
    std::vector<std::size_t> idx;
    for (std::size_t i = 0; i < cases.size(); ++i)
      if (cases[i].lead >= a && cases[i].lead <= bnd) idx.push_back(i);
    if (idx.empty()) continue;
    BlockScores b = block_scores(cases, idx, clim, n_states);
    windows.push_back({{"first_lead_days", a}, {"last_lead_days", bnd}, {"cases", b.n},
                       {"hit_rate", interval(idx, 0)}, {"heidke", interval(idx, 1)},
                       {"multicategory_brier", num(b.mcbs)}, {"multicategory_brier_skill", interval(idx, 2)},
                       {"regimes", regime_scores(cases, idx, clim, states)},
                       {"reliability", reliability_json(cases, idx, states.size())},
                       {"frequency_bias", frequency_bias_json(cases, idx, states)}});
  }
  json by_month = json::object();
  {
    std::map<int, std::vector<std::size_t>> months;
    for (std::size_t i = 0; i < cases.size(); ++i)
      if (cases[i].lead >= 1) months[cases[i].month].push_back(i);
    for (auto& [m, idx] : months) by_month[std::to_string(m)] = frequency_bias_json(cases, idx, states);
  }

  // 5. Episodes: observed runs of at least min_episode_days in one regime.
  std::int64_t first_valid = cases.front().valid, last_valid = cases.front().valid;
  for (const auto& c : cases) {
    first_valid = std::min(first_valid, c.valid);
    last_valid = std::max(last_valid, c.valid);
  }
  std::map<std::pair<int, std::int64_t>, const Case*> case_at;  // (issue, valid)
  std::vector<std::vector<const Case*>> by_issue(docs.size());     // lead >= 1, by lead
  for (const auto& c : cases) {
    case_at[{c.issue, c.valid}] = &c;
    if (c.lead >= 1) by_issue[static_cast<std::size_t>(c.issue)].push_back(&c);
  }
  json episodes = json::array();
  int caught = 0, missed = 0;
  {
    std::int64_t run_start = 0;
    int run_label = -1, run_len = 0;
    auto close_run = [&](std::int64_t end_day) {
      if (run_label < 0 || run_label == k || run_len < cfg.min_episode_days) return;
      int longest = -1;
      for (std::size_t g = 0; g < docs.size(); ++g) {
        auto it = case_at.find({static_cast<int>(g), run_start});
        if (it == case_at.end() || it->second->lead < 1) continue;
        const Case& c = *it->second;
        if (c.most_likely == run_label || c.p(run_label) >= 0.5) longest = std::max(longest, c.lead);
      }
      (longest >= 1 ? caught : missed)++;
      episodes.push_back({{"regime", states[run_label]},
                          {"name", model.regimes[run_label].name},
                          {"onset", to_string(from_day_number(run_start, Calendar::ProlepticGregorian))},
                          {"end", to_string(from_day_number(end_day, Calendar::ProlepticGregorian))},
                          {"days", run_len},
                          {"caught", longest >= 1},
                          {"longest_lead_days", longest >= 1 ? json(longest) : json()}});
    };
    std::int64_t prev = std::numeric_limits<std::int64_t>::min();
    for (const auto& [day, label] : observed) {
      if (day < first_valid || day > last_valid) continue;
      if (day == prev + 1 && label == run_label) {
        ++run_len;
      } else {
        close_run(prev);
        run_start = day;
        run_label = label;
        run_len = 1;
      }
      prev = day;
    }
    close_run(prev);
  }
  // False alarms: forecast runs (most likely regime, lead >= 1) of at least
  // min_episode_days that the observations confirm on fewer than half of their days.
  json false_alarms = json::array();
  arma::vec false_by_regime(k, arma::fill::zeros);
  for (std::size_t g = 0; g < docs.size(); ++g) {
    std::vector<const Case*>& seq = by_issue[g];
    std::sort(seq.begin(), seq.end(), [](auto a, auto b) { return a->lead < b->lead; });
    std::size_t i = 0;
    while (i < seq.size()) {
      std::size_t j = i;
      while (j + 1 < seq.size() && seq[j + 1]->lead == seq[j]->lead + 1 && seq[j + 1]->most_likely == seq[i]->most_likely) ++j;
      int r = seq[i]->most_likely;
      int len = static_cast<int>(j - i + 1);
      if (r < k && len >= cfg.min_episode_days) {
        int match = 0;
        for (std::size_t q = i; q <= j; ++q) match += seq[q]->observed == r;
        if (2 * match < len) {
          false_by_regime(r) += 1;
          if (false_alarms.size() < 500)
            false_alarms.push_back({{"issue_date", to_string(issues[g])}, {"regime", states[r]},
                                    {"from_lead_days", seq[i]->lead}, {"to_lead_days", seq[j]->lead},
                                    {"observed_fraction", double(match) / len}});
        }
      }
      i = j + 1;
    }
  }

  // 6. The report.
  json regimes = json::array();
  for (int r = 0; r < k; ++r)
    regimes.push_back({{"id", states[r]}, {"name", model.regimes[r].name}, {"climatological_frequency", clim(r)},
                       {"false_alarms", static_cast<int>(false_by_regime(r))}});
  json observed_seq = json::array();
  for (const auto& [day, label] : observed)
    if (day >= first_valid && day <= last_valid)
      observed_seq.push_back({to_string(from_day_number(day, Calendar::ProlepticGregorian)), states[label]});
  json guidance_most_likely = json::array();  // for the sequence chart: per issue, per lead
  for (std::size_t g = 0; g < docs.size(); ++g) {
    json row = json::array();
    for (const auto& e : docs[g].at("daily")) row.push_back({e.at("lead_days"), e.at("most_likely")});
    guidance_most_likely.push_back({{"issue_date", to_string(issues[g])}, {"most_likely", row}});
  }
  const std::string stamp = utc_timestamp_now();
  json rep;
  rep["format"] = "isohypse-verification";
  rep["format_version"] = 1;
  rep["caution"] = kCaution;
  rep["period"] = {{"from", to_string(from_day_number(first_valid, Calendar::ProlepticGregorian))},
                   {"to", to_string(from_day_number(last_valid, Calendar::ProlepticGregorian))}};
  rep["states"] = states;
  rep["regimes"] = regimes;
  rep["climatology"] = json(std::vector<double>(clim.begin(), clim.end()));
  rep["guidance"] = {{"files", files.size()},
                     {"first_issue", to_string(*std::min_element(issues.begin(), issues.end()))},
                     {"last_issue", to_string(*std::max_element(issues.begin(), issues.end()))}};
  rep["observations"] = {{"source", obs.source}, {"files", cfg.observed}};
  rep["cases"] = cases.size();
  rep["by_lead"] = by_lead;
  rep["windows"] = windows;
  rep["frequency_bias_by_month"] = by_month;
  rep["episodes"] = {{"min_days", cfg.min_episode_days}, {"caught", caught}, {"missed", missed}, {"list", episodes},
                     {"false_alarms", false_alarms.size()}, {"false_alarm_list", false_alarms}};
  rep["sequence"] = {{"observed", observed_seq}, {"guidance", guidance_most_likely}};
  rep["bootstrap"] = {{"resamples", cfg.bootstrap_resamples}, {"confidence", cfg.confidence},
                      {"blocks", "initialisation (issue) dates"}, {"seed", cfg.seed}};
  rep["provenance"] = {{"tool", "isohypse"}, {"version", ISOHYPSE_VERSION}, {"created", stamp},
                       {"model", {{"path", model.path}, {"sha256", model.sha256}}}};
  return rep;
}

}  // namespace isohypse
