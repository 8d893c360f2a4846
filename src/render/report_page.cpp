// Rendering a verification report: a self-contained HTML page with inline
// SVG (no scripts, fonts or network), and a short text for the terminal.
#include "isohypse/render/report_page.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <sstream>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/vocabulary.hpp"

namespace isohypse {

namespace {

using json = nlohmann::json;

// Colours and escaping come from the shared vocabulary (base/vocabulary.hpp):
// state_colour for everything coloured by regime, series_colour for lines
// that are not regimes (score lines, lead windows).
std::string esc(const std::string& s) { return html_escape(s); }

std::string fmt(const json& v, const char* f = "%.2f") {
  if (!v.is_number()) return "&ndash;";
  char b[32];
  std::snprintf(b, sizeof b, f, v.get<double>());
  // A value that rounds to zero prints without a sign ("-0.0000" reads as a
  // negative term).
  const std::string text = b;
  const bool zero = text.size() > 1 && text[0] == '-' && text.find_first_not_of("-0.") == std::string::npos;
  return zero ? std::string(b + 1) : text;
}

// The estimate, its interval and the block length it rests on; the reason
// when no interval could be given (fewer than 3 blocks in the period).
std::string interval_text(const json& i) {
  const std::string blocks = i.contains("block_days") ? std::to_string(i["block_days"].get<int>()) + "-day blocks" : "";
  if (i.contains("note") && !i["lower"].is_number())
    return fmt(i["estimate"]) + " <small title=\"" + esc(i["note"].get<std::string>()) +
           "\">(no interval: fewer than 3 " + blocks + " in the period)</small>";
  return fmt(i["estimate"]) + " <small>(" + fmt(i["lower"]) + " to " + fmt(i["upper"]) +
         (blocks.empty() ? "" : "; " + blocks) + ")</small>";
}

// How the intervals were made, with the block lengths of the window
// intervals (one length, or the range when "auto" chose one per interval).
std::string block_summary(const json& rep) {
  const json& b = rep["bootstrap"];
  int shortest = 0, longest = 0;
  for (const auto& w : rep["windows"])
    for (const char* score : {"hit_rate", "heidke", "multicategory_brier_skill"}) {
      const int days = w[score].value("block_days", 0);
      shortest = shortest == 0 ? days : std::min(shortest, days);
      longest = std::max(longest, days);
    }
  const std::string rule = b.value("block_days", std::string());
  std::string text = "Student-t on a moving-block bootstrap over consecutive issue dates (Kuensch 1989; t with "
                     "blocks - 1 degrees of freedom, Schmeiser 1982)";
  if (longest > 0) {
    text += ", blocks of " + std::to_string(shortest);
    if (longest > shortest) text.append("-").append(std::to_string(longest));
    text += " days";
  }
  if (rule == "lag+7") text += " (lag span " + std::to_string(b.value("lag_span_days", 0)) + " days + 7)";
  if (rule == "auto") text += " (Wilks 1997, from the lag-1 autocorrelation of the per-issue hit rate)";
  return text + "; no interval with fewer than " + std::to_string(b.value("min_blocks", 3)) + " blocks in the period";
}

// A line chart of series y(x); y may be null.
std::string line_chart(const std::string& title,
                       const std::vector<std::pair<std::string, std::vector<std::pair<double, json>>>>& series,
                       double ymin, double ymax, const std::string& xlabel) {
  const double W = 640, H = 280, L = 50, R = 130, T = 30, B = 40;
  double xmax = 1;
  for (const auto& s : series)
    for (const auto& [x, y] : s.second) xmax = std::max(xmax, x);
  auto X = [&](double x) { return L + (W - L - R) * x / xmax; };
  auto Y = [&](double y) { return T + (H - T - B) * (1 - (y - ymin) / (ymax - ymin)); };
  std::ostringstream o;
  o << "<svg class=\"chart\" viewBox=\"0 0 " << W << " " << H << "\" width=\"" << W << "\" height=\"" << H
    << "\" role=\"img\" aria-label=\"" << esc(title) << "\">";
  o << "<text x=\"" << L << "\" y=\"18\" font-weight=\"bold\">" << esc(title) << "</text>";
  for (int i = 0; i <= 4; ++i) {
    double y = ymin + (ymax - ymin) * i / 4;
    o << "<line x1=\"" << L << "\" x2=\"" << W - R << "\" y1=\"" << Y(y) << "\" y2=\"" << Y(y)
      << "\" stroke=\"#ddd\"/><text x=\"" << L - 6 << "\" y=\"" << Y(y) + 4 << "\" text-anchor=\"end\">" << fmt(json(y))
      << "</text>";
  }
  for (int i = 0; i <= 5; ++i) {
    double x = xmax * i / 5;
    o << "<text x=\"" << X(x) << "\" y=\"" << H - B + 16 << "\" text-anchor=\"middle\">" << fmt(json(x), "%.0f")
      << "</text>";
  }
  o << "<text x=\"" << (L + W - R) / 2 << "\" y=\"" << H - 6 << "\" text-anchor=\"middle\">" << esc(xlabel)
    << "</text>";
  if (ymin < 0 && ymax > 0)
    o << "<line x1=\"" << L << "\" x2=\"" << W - R << "\" y1=\"" << Y(0) << "\" y2=\"" << Y(0)
      << "\" stroke=\"#888\"/>";
  int si = 0;
  for (const auto& [name, pts] : series) {
    std::string col = series_colour(si);
    o << "<polyline class=\"series\" fill=\"none\" stroke=\"" << col << "\" stroke-width=\"2\" points=\"";
    for (const auto& [x, y] : pts)
      if (y.is_number()) o << X(x) << "," << Y(std::clamp(y.get<double>(), ymin, ymax)) << " ";
    o << "\"/><text x=\"" << W - R + 8 << "\" y=\"" << T + 16 * si + 10 << "\" fill=\"" << col << "\">" << esc(name)
      << "</text>";
    ++si;
  }
  o << "</svg>";
  return o.str();
}

// A count in at most four characters: 987, 1.3k, 13k.
std::string short_count(double n) {
  char text[16];
  if (n < 1000)
    std::snprintf(text, sizeof text, "%.0f", n);
  else if (n < 9950)
    std::snprintf(text, sizeof text, "%.1fk", n / 1000);
  else
    std::snprintf(text, sizeof text, "%.0fk", n / 1000);
  return text;
}

// One window's reliability diagram: forecast probability against observed
// frequency with ticks every 0.2, the diagonal of perfect reliability, each
// non-empty bin as a dot at (mean forecast, observed frequency) on its
// consistency bar (the range a reliable forecast would give, Broecker & Smith
// 2007), and each bin's count along the top. `kind` is the chart's class:
// "reliability" for the daily probabilities, "dominance" for the window
// products' dominance probabilities.
std::string reliability_panel(const json& w, int wi, const std::string& kind = "reliability") {
  const double S = 300, L = 46, T = 44, B = 40, R = 14;
  const double side = S - T - B;
  auto P = [&](double v) { return L + side * v; };
  auto Q = [&](double v) { return T + side * (1 - v); };
  const std::string col = series_colour(wi);
  std::ostringstream o;
  o << "<svg class=\"chart " << kind << "\" viewBox=\"0 0 " << L + side + R << " " << S << "\" width=\"" << L + side + R
    << "\" height=\"" << S << "\" role=\"img\" aria-label=\"" << (kind == "dominance" ? "dominance " : "")
    << "reliability diagram, days " << w["first_lead_days"] << "-" << w["last_lead_days"] << "\">";
  o << "<text x=\"" << L << "\" y=\"16\" font-weight=\"bold\">Days " << w["first_lead_days"] << "&ndash;"
    << w["last_lead_days"] << "</text><text x=\"" << L - 6 << "\" y=\"" << T - 8
    << "\" text-anchor=\"end\" font-size=\"10\">n</text>";
  for (int i = 0; i <= 5; ++i) {
    const double v = i / 5.0;
    o << "<line x1=\"" << P(v) << "\" x2=\"" << P(v) << "\" y1=\"" << Q(0) << "\" y2=\"" << Q(0) + 4
      << "\" stroke=\"#444\"/><text x=\"" << P(v) << "\" y=\"" << Q(0) + 16 << "\" text-anchor=\"middle\">"
      << fmt(json(v), "%.1f") << "</text><line x1=\"" << P(0) - 4 << "\" x2=\"" << P(0) << "\" y1=\"" << Q(v)
      << "\" y2=\"" << Q(v) << "\" stroke=\"#444\"/><text x=\"" << P(0) - 6 << "\" y=\"" << Q(v) + 4
      << "\" text-anchor=\"end\">" << fmt(json(v), "%.1f") << "</text>";
  }
  o << "<rect x=\"" << P(0) << "\" y=\"" << Q(1) << "\" width=\"" << side << "\" height=\"" << side
    << "\" fill=\"none\" stroke=\"#444\"/><line x1=\"" << P(0) << "\" y1=\"" << Q(0) << "\" x2=\"" << P(1)
    << "\" y2=\"" << Q(1) << "\" stroke=\"#888\" stroke-dasharray=\"4 3\"/>";
  o << "<text x=\"" << P(0.5) << "\" y=\"" << S - 6 << "\" text-anchor=\"middle\">forecast probability</text>"
    << "<text x=\"12\" y=\"" << Q(0.5) << "\" transform=\"rotate(-90 12 " << Q(0.5)
    << ")\" text-anchor=\"middle\">observed frequency</text>";
  int bin = 0;
  for (const auto& b : w["reliability"]) {
    // Counts in two staggered rows, thousands shortened (the exact count on hover), so neighbours never overlap.
    o << "<text class=\"count\" x=\"" << P((b["lower"].get<double>() + b["upper"].get<double>()) / 2) << "\" y=\""
      << T - 8 - 11 * (bin++ % 2) << "\" text-anchor=\"middle\" font-size=\"10\" fill=\"#666\"><title>" << b["count"]
      << " cases</title>" << short_count(b["count"].get<double>()) << "</text>";
    if (!b["mean_forecast"].is_number()) continue;
    const double x = P(b["mean_forecast"].get<double>());
    if (b["consistency_lower"].is_number())
      o << "<line class=\"bar\" x1=\"" << x << "\" x2=\"" << x << "\" y1=\"" << Q(b["consistency_lower"].get<double>())
        << "\" y2=\"" << Q(b["consistency_upper"].get<double>()) << "\" stroke=\"#999\" stroke-width=\"5\"/>";
    o << "<circle cx=\"" << x << "\" cy=\"" << Q(b["observed_frequency"].get<double>())
      << "\" r=\"4\" stroke=\"#fff\" fill=\"" << col << "\"/>";
  }
  o << "</svg>";
  return o.str();
}

// A reliability diagram per window, all states pooled.
std::string reliability_chart(const json& windows) {
  std::ostringstream o;
  int wi = 0;
  for (const auto& w : windows) o << reliability_panel(w, wi++);
  return o.str();
}

// What the decomposition and the bars are, with their sources.
std::string reliability_intro(const json& rep) {
  const json& rel = rep["reliability"];
  std::ostringstream o;
  o << "<p>Brier score per regime in " << rel["bins"]
    << " probability bins of fixed width: BS = reliability &minus; resolution + uncertainty + within-bin variance "
       "&minus; within-bin covariance (Stephenson, Coelho &amp; Jolliffe 2008). Diagrams: every regime pooled; "
       "grey bars show the "
    << fmt(json(100 * rel["consistency_bars"]["level"].get<double>()), "%.0f")
    << "% range of observed frequency a reliable forecast would give (Br&ouml;cker &amp; Smith 2007, "
    << rel["consistency_bars"]["resamples"] << " resamples); the numbers along the top are the cases per bin.</p>";
  return o.str();
}

// The share of a regime's Brier score that is reliability (REL / BS), NaN
// with fewer than kShareMinDays days on which it was observed or on which
// it was not (the bins then hold too few of one outcome to say anything).
constexpr double kShareMinDays = 10;
double reliability_share(const json& regime, double cases) {
  const double observed = regime["base_rate"].get<double>() * cases;
  const double brier = regime["brier"].get<double>();
  if (observed < kShareMinDays - 1e-9 || cases - observed < kShareMinDays - 1e-9 || !(brier > 0)) return NAN;
  return regime["reliability"].get<double>() / brier;
}

// The five terms of the binned Brier decomposition (Stephenson, Coelho &
// Jolliffe 2008) per window and regime: BS = REL - RES + UNC + WBV - WBC.
std::string decomposition_table(const json& rep, const std::vector<std::string>& states) {
  std::ostringstream o;
  o << "<table><tr><th>lead days</th><th class=\"l\">regime</th><th>Brier score</th><th>reliability</th>"
       "<th>resolution</th><th>uncertainty</th><th>within-bin variance</th><th>within-bin covariance</th>"
       "<th>reliability from sampling alone: mean, upper</th>"
       "<th>reliability / Brier score</th><th>beyond sampling / Brier score</th>"
       "<th>Brier skill vs climatology</th></tr>";
  for (const auto& w : rep["windows"])
    for (const auto& s : states) {
      const json& r = w["regimes"][s];
      o << "<tr><td>" << w["first_lead_days"] << "&ndash;" << w["last_lead_days"]
        << "</td><td class=\"l\" style=\"color:" << state_colour(states, s) << "\">" << esc(s) << "</td>";
      for (const char* key : {"brier", "reliability", "resolution", "uncertainty", "within_bin_variance",
                              "within_bin_covariance"})
        o << "<td>" << fmt(r[key], "%.4f") << "</td>";
      o << "<td>" << fmt(r.value("reliability_sampling_mean", json()), "%.4f") << ", "
        << fmt(r.value("reliability_sampling_upper", json()), "%.4f") << "</td>";
      const double share = reliability_share(r, w["cases"].get<double>());
      const double beyond = std::isfinite(share) && r.contains("reliability_beyond_sampling")
                                ? r["reliability_beyond_sampling"].get<double>() / r["brier"].get<double>()
                                : NAN;
      o << "<td>" << fmt(number_or_null(share), "%.2f") << "</td><td>" << fmt(number_or_null(beyond), "%.2f")
        << "</td><td>" << fmt(r["brier_skill"]) << "</td></tr>";
    }
  o << "</table>";
  return o.str();
}

// The most likely state of the guidance issued `lead` days before each day of
// the observed sequence, for the leads charted: (lead, day index) -> state.
std::map<std::pair<int, int>, std::string> guidance_cells(const json& rep, const std::vector<int>& leads) {
  const json& obs = rep["sequence"]["observed"];
  std::map<std::string, int> day_index;
  for (std::size_t i = 0; i < obs.size(); ++i) day_index[obs[i][0]] = static_cast<int>(i);
  std::map<std::pair<int, int>, std::string> cell;
  for (const auto& g : rep["sequence"]["guidance"]) {
    Date issue = parse_date(g["issue_date"].get<std::string>(), Calendar::ProlepticGregorian);
    for (const auto& e : g["most_likely"]) {
      int lead = e[0];
      if (std::find(leads.begin(), leads.end(), lead) == leads.end()) continue;
      auto it = day_index.find(to_string(add_days(issue, lead)));
      if (it != day_index.end()) cell[{lead, it->second}] = e[1];
    }
  }
  return cell;
}

// A row of the legend: a swatch and the id of every state.
std::string state_legend(const std::vector<std::string>& states, double x, double y) {
  std::ostringstream o;
  for (const auto& s : states) {
    o << "<rect x=\"" << x << "\" y=\"" << y - 10 << "\" width=\"12\" height=\"12\" fill=\"" << state_colour(states, s)
      << "\"/><text x=\"" << x + 16 << "\" y=\"" << y << "\">" << esc(s) << "</text>";
    x += 40 + 8 * s.size();
  }
  return o.str();
}

// Observed sequence (top row) against the most likely regime of guidance
// issued `lead` days before each date.
std::string sequence_chart(const json& rep, const std::vector<std::string>& states) {
  const json& obs = rep["sequence"]["observed"];
  const std::vector<int> leads = {1, 3, 5, 7, 10, 14, 21, 28};
  const auto cell = guidance_cells(rep, leads);
  const double cw = std::max(2.0, std::min(8.0, 900.0 / std::max<std::size_t>(1, obs.size()))), rh = 16, L = 90;
  const double W = L + cw * obs.size() + 10, H = rh * (leads.size() + 1) + 60;
  std::ostringstream o;
  o << "<svg class=\"chart\" viewBox=\"0 0 " << W << " " << H << "\" width=\"" << W << "\" height=\"" << H
    << "\" role=\"img\" aria-label=\"observed sequence against guidance\">";
  o << "<text x=\"" << L - 6 << "\" y=\"" << 12 + rh * 0.7 << "\" text-anchor=\"end\">observed</text>";
  for (std::size_t i = 0; i < obs.size(); ++i)
    o << "<rect x=\"" << L + cw * i << "\" y=\"12\" width=\"" << cw << "\" height=\"" << rh - 2 << "\" fill=\""
      << state_colour(states, obs[i][1]) << "\"><title>" << obs[i][0].get<std::string>() << " "
      << esc(obs[i][1].get<std::string>()) << "</title></rect>";
  for (std::size_t r = 0; r < leads.size(); ++r) {
    double y = 12 + rh * (r + 1);
    o << "<text x=\"" << L - 6 << "\" y=\"" << y + rh * 0.7 << "\" text-anchor=\"end\">lead " << leads[r]
      << " d</text>";
    for (std::size_t i = 0; i < obs.size(); ++i) {
      auto it = cell.find({leads[r], static_cast<int>(i)});
      if (it == cell.end()) continue;
      o << "<rect x=\"" << L + cw * i << "\" y=\"" << y << "\" width=\"" << cw << "\" height=\"" << rh - 2
        << "\" fill=\"" << state_colour(states, it->second) << "\"/>";
    }
  }
  o << state_legend(states, L, 12 + rh * (leads.size() + 1) + 20);
  if (!obs.empty())
    o << "<text x=\"" << L << "\" y=\"" << H - 6 << "\">" << obs.front()[0].get<std::string>() << "</text><text x=\""
      << W - 10 << "\" y=\"" << H - 6 << "\" text-anchor=\"end\">" << obs.back()[0].get<std::string>() << "</text>";
  o << "</svg>";
  return o.str();
}

using States = std::vector<std::string>;

std::string page_head(const json& rep) {
  std::ostringstream o;
  o << "<!DOCTYPE html><html lang=\"en\"><head><meta charset=\"utf-8\"><title>isohypse verification "
    << rep["period"]["from"].get<std::string>() << " to " << rep["period"]["to"].get<std::string>()
    << "</title><style>body{font-family:sans-serif;margin:1.5em;max-width:1100px;color:#222}"
       "table{border-collapse:collapse;margin:.5em 0}td,th{border:1px solid #ccc;padding:3px 8px;text-align:right}"
       "th{background:#f3f3f3}td.l,th.l{text-align:left}.caution{background:#fff4e0;border-left:4px solid #b8860b;"
       "padding:.6em 1em}svg text{font-size:12px;font-family:sans-serif}small{color:#666}</style></head><body>";
  return o.str();
}

constexpr const char* kMonth[] = {"Jan", "Feb", "Mar", "Apr", "May", "Jun",
                                   "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"};

std::vector<int> season_months(const json& by_month);

// True when the report scored every month against monthly climatology (--all-months).
bool all_months(const json& rep) { return rep.value("season_filter", "") == "all months, monthly climatology"; }

// "Apr 17, May 3": the pairs outside the model's season by month.
std::string out_of_season_months(const json& rep) {
  std::string text;
  for (const auto& [month, n] : rep["out_of_season"]["by_month"].items())
    text += (text.empty() ? "" : ", ") + std::string(kMonth[std::stoi(month) - 1]) + " " + n.dump();
  return text;
}

// With --all-months: the reference frequencies of each valid month scored.
std::string monthly_reference_table(const json& rep) {
  const auto states = rep["states"].get<std::vector<std::string>>();
  const json& months = rep["monthly_climatology"]["months"];
  std::ostringstream o;
  o << "<table><tr><th class=\"l\">valid month</th><th>record days</th>";
  for (const auto& s : states) o << "<th style=\"color:" << state_colour(states, s) << "\">" << esc(s) << "</th>";
  o << "</tr>";
  for (int mo : season_months(months)) {
    const json& m = months[std::to_string(mo)];
    o << "<tr><td class=\"l\">" << kMonth[mo - 1] << "</td><td>" << m["record_days"] << "</td>";
    for (const auto& f : m["frequency"]) o << "<td>" << fmt(f, "%.3f") << "</td>";
    o << "</tr>";
  }
  o << "</table>";
  return o.str();
}

// The note about the season: how many observed days of guidance fell outside
// the model's season, and whether they were left out of the scores (the
// default; older reports have no count: nothing) or scored with every pair
// against the climatology of its valid month (--all-months).
std::string out_of_season_note(const json& rep) {
  if (!rep.contains("out_of_season")) return {};
  const auto outside = rep["out_of_season"]["cases"].get<std::size_t>();
  std::ostringstream o;
  if (all_months(rep)) {
    o << "<p>Season filter: all months, monthly climatology (--all-months). Every pair is scored, "
      << (outside == 0 ? std::string("none of them outside the regime model's season")
                       : std::to_string(outside) + " of them valid outside the regime model's season (" +
                             out_of_season_months(rep) + ")")
      << "; the reference forecast of every skill score and of the catch rule is the climatological frequency of "
         "the pair's valid month, counted over every day of that month in the model's record. The regimes were "
         "derived from the season only.</p>"
      << monthly_reference_table(rep);
    return o.str();
  }
  if (outside == 0) return {};
  o << "<p>Not scored (season filter: model season): " << outside
    << " pairs valid outside the regime model's season (" << out_of_season_months(rep)
    << "); the regimes and their frequencies describe the season only.</p>";
  return o.str();
}

// Which probabilities the headline scores use: each issue's headline, and
// how many issues are calibrated (reports before calibration: raw ones).
std::string headline_note(const json& rep) {
  if (!rep.contains("raw_versus_calibrated"))
    return "<p>The scores use the guidance's raw probabilities: no issue of the archive is calibrated.</p>";
  const json& n = rep["raw_versus_calibrated"]["issues"];
  return "<p>The scores use each issue's headline probabilities: the calibrated ones for the " +
         std::to_string(n["calibrated"].get<int>()) + " calibrated issues, the raw ones for the " +
         std::to_string(n["raw"].get<int>()) + " issues without calibration. The table below compares the raw and "
         "the calibrated probabilities of the calibrated issues over the same cases.</p>";
}

// The title, the caution and what was verified against what.
std::string summary_section(const json& rep) {
  std::ostringstream o;
  o << "<h1>Regime guidance post-mortem</h1><p class=\"caution\">" << esc(rep["caution"].get<std::string>()) << "</p>";
  o << "<p>Valid dates " << rep["period"]["from"].get<std::string>() << " to " << rep["period"]["to"].get<std::string>()
    << "; " << rep["guidance"]["files"] << " guidance issues (" << rep["guidance"]["first_issue"].get<std::string>()
    << " to " << rep["guidance"]["last_issue"].get<std::string>() << "); " << rep["cases"]
    << " forecast-observation pairs; observations from " << esc(rep["observations"]["source"].get<std::string>())
    << ". Intervals: " << fmt(json(100 * rep["bootstrap"]["confidence"].get<double>()), "%.0f")
    << "% " << esc(block_summary(rep)) << ".</p>";
  o << out_of_season_note(rep) << headline_note(rep);
  return o.str();
}

std::string regimes_table(const json& rep, const States& states) {
  std::ostringstream o;
  o << "<h2>Regimes</h2><table><tr><th class=\"l\">id</th><th class=\"l\">name</th><th>climatological frequency</th>"
       "<th>false alarms</th></tr>";
  for (const auto& r : rep["regimes"])
    o << "<tr><td class=\"l\" style=\"color:" << state_colour(states, r["id"]) << "\">"
      << esc(r["id"].get<std::string>()) << "</td><td class=\"l\">" << esc(r["name"].get<std::string>()) << "</td><td>"
      << fmt(r["climatological_frequency"]) << "</td><td>" << r["false_alarms"] << "</td></tr>";
  o << "</table>";
  return o.str();
}

std::string window_scores_table(const json& rep) {
  std::ostringstream o;
  o << "<h2>Skill by window</h2><table><tr><th>lead days</th><th>cases</th><th>hit rate of the most likely regime</th>"
       "<th>Heidke skill</th><th>multi-category Brier skill vs climatology</th></tr>";
  for (const auto& w : rep["windows"])
    o << "<tr><td>" << w["first_lead_days"] << "&ndash;" << w["last_lead_days"] << "</td><td>" << w["cases"]
      << "</td><td>" << interval_text(w["hit_rate"]) << "</td><td>" << interval_text(w["heidke"]) << "</td><td>"
      << interval_text(w["multicategory_brier_skill"]) << "</td></tr>";
  o << "</table>";
  return o.str();
}

// The calibrated issues' raw probabilities against their calibrated ones, per
// lead window and per window product (reports without calibration: nothing).
std::string raw_versus_calibrated_table(const json& rep) {
  if (!rep.contains("raw_versus_calibrated")) return {};
  const json& rc = rep["raw_versus_calibrated"];
  std::ostringstream o;
  o << "<h2>Raw against calibrated</h2><table><tr><th rowspan=\"2\">lead days</th><th rowspan=\"2\">cases</th>"
       "<th colspan=\"2\">multi-category Brier skill vs climatology</th><th rowspan=\"2\">calibrated &minus; raw</th>"
       "<th colspan=\"2\">reliability (summed over the states)</th><th colspan=\"2\">hit rate of the most likely"
       "</th></tr><tr><th>raw</th><th>calibrated</th><th>raw</th><th>calibrated</th><th>raw</th><th>calibrated</th>"
       "</tr>";
  for (const auto& w : rc["windows"])
    o << "<tr><td>" << w["first_lead_days"] << "&ndash;" << w["last_lead_days"] << "</td><td>" << w["cases"]
      << "</td><td>" << interval_text(w["raw"]["multicategory_brier_skill"]) << "</td><td>"
      << interval_text(w["calibrated"]["multicategory_brier_skill"]) << "</td><td>"
      << interval_text(w["skill_difference"]) << "</td><td>" << fmt(w["raw"]["reliability"], "%.4f") << "</td><td>"
      << fmt(w["calibrated"]["reliability"], "%.4f") << "</td><td>" << fmt(w["raw"]["hit_rate"]) << "</td><td>"
      << fmt(w["calibrated"]["hit_rate"]) << "</td></tr>";
  o << "</table>";
  if (rc["window_products"].empty()) return o.str();
  o << "<table><tr><th rowspan=\"2\">window products, lead days</th><th rowspan=\"2\">windows</th>"
       "<th colspan=\"2\">dominance: multi-category Brier skill</th><th colspan=\"2\">dominance: reliability</th>"
       "<th colspan=\"2\">expected days: skill of the absolute error</th></tr><tr><th>raw</th><th>calibrated</th>"
       "<th>raw</th><th>calibrated</th><th>raw</th><th>calibrated</th></tr>";
  for (const auto& g : rc["window_products"])
    o << "<tr><td>" << g["first_lead_days"] << "&ndash;" << g["last_lead_days"] << "</td><td>" << g["cases"]
      << "</td><td>" << interval_text(g["raw"]["dominance_multicategory_brier_skill"]) << "</td><td>"
      << interval_text(g["calibrated"]["dominance_multicategory_brier_skill"]) << "</td><td>"
      << fmt(g["raw"]["dominance_reliability"], "%.4f") << "</td><td>"
      << fmt(g["calibrated"]["dominance_reliability"], "%.4f") << "</td><td>"
      << interval_text(g["raw"]["expected_days_skill"]) << "</td><td>"
      << interval_text(g["calibrated"]["expected_days_skill"]) << "</td></tr>";
  o << "</table>";
  return o.str();
}

// Why windows of one lead range were not scored, "2 not observed, 1 outside
// the season" (empty when none was left out).
std::string left_out_text(const json& g) {
  std::string text;
  using Reason = std::pair<const char*, const char*>;
  for (const auto& [key, words] : {Reason{"partly_outside_period", "partly outside the period"},
                                   Reason{"outside_season", "outside the model's season"},
                                   Reason{"not_observed", "not observed on every day"},
                                   Reason{"no_member_covers", "no member covering enough of the window"}}) {
    const std::size_t n = g["left_out"].value(key, std::size_t{0});
    if (n > 0) text += (text.empty() ? "" : ", ") + std::to_string(n) + " " + words;
  }
  return text;
}

// One lead range's window products: the dominance scores and the expected
// days per state, with the headline skills and their intervals.
std::string window_product_table(const json& g, const States& states) {
  const json& dom = g["dominance"];
  const json& days = g["expected_days"];
  std::ostringstream o;
  o << "<h3>Days " << g["first_lead_days"] << "&ndash;" << g["last_lead_days"] << " (" << g["days"]
    << " days)</h3><p>" << g["cases"] << " of " << g["windows"] << " windows scored";
  const std::string left = left_out_text(g);
  if (!left.empty()) o << " (left out: " << left << ")";
  o << "; " << g["tied"] << " with a tie for the most observed days, left out of the dominance scores. "
    << "Dominance: multi-category Brier skill vs climatology " << interval_text(dom["multicategory_brier_skill"])
    << ". Expected days: mean absolute error " << fmt(days["mae"]) << " days (climatology "
    << fmt(days["mae_climatology"]) << "), skill " << interval_text(days["skill"]) << ".</p>";
  // Two tables side by side when they fit: the dominance probability, then the expected days.
  o << "<div style=\"display:flex;flex-wrap:wrap;column-gap:1.5em;align-items:flex-start\">"
       "<table><tr><th class=\"l\" colspan=\"7\">probability of dominating the window</th></tr>"
       "<tr><th class=\"l\">regime</th><th>climatology</th><th>Brier score</th><th>reliability</th>"
       "<th>resolution</th><th>Brier skill</th><th>ROC area</th></tr>";
  auto value = [](const json& obj, const char* key) { return obj.contains(key) ? obj[key] : json(); };
  auto name_cell = [&states](const std::string& s) {
    return "<td class=\"l\" style=\"color:" + state_colour(states, s) + "\">" + esc(s) + "</td>";
  };
  for (const auto& s : states) {
    const json& r = dom["regimes"].contains(s) ? dom["regimes"][s] : json::object();
    o << "<tr>" << name_cell(s) << "<td>" << fmt(g["climatology"]["dominance"][s]) << "</td><td>"
      << fmt(value(r, "brier"), "%.4f") << "</td><td>" << fmt(value(r, "reliability"), "%.4f") << "</td><td>"
      << fmt(value(r, "resolution"), "%.4f") << "</td><td>" << fmt(value(r, "brier_skill")) << "</td><td>"
      << fmt(value(r, "roc_area")) << "</td></tr>";
  }
  o << "</table><table><tr><th class=\"l\" colspan=\"6\">expected days (mean per window)</th></tr>"
       "<tr><th class=\"l\">regime</th><th>forecast</th><th>observed</th><th>climatology</th>"
       "<th>absolute error</th><th>its skill</th></tr>";
  for (const auto& s : states) {
    const json& e = days["regimes"][s];
    o << "<tr>" << name_cell(s) << "<td>" << fmt(e["mean_expected_days"]) << "</td><td>"
      << fmt(e["mean_observed_days"]) << "</td><td>" << fmt(e["climatological_days"]) << "</td><td>"
      << fmt(e["mae"]) << "</td><td>" << fmt(e["skill"]) << "</td></tr>";
  }
  o << "</table></div>";
  return o.str();
}

// The window products the desk reads, scored (reports without them: nothing).
std::string window_products_section(const json& rep, const States& states) {
  if (!rep.contains("window_products") || rep["window_products"]["windows"].empty()) return {};
  std::ostringstream o;
  o << "<h2>Window products</h2><p>The probability that a regime dominates a window (is the most frequent state "
       "over its valid days) scored with the Brier score, its skill against the climatological dominance probability "
       "of the model's record and the ROC area; the expected days per regime (the summed daily probabilities) "
       "against the observed days, with the skill of their mean absolute error against the climatological days "
       "(window length &times; climatological frequency). A window is scored when every valid day lies in the "
       "period and the season and was observed.</p>";
  for (const auto& g : rep["window_products"]["windows"]) o << window_product_table(g, states);
  o << "<p>Reliability of the dominance probabilities, every regime pooled (grey bars: the range a reliable "
       "forecast would give; the numbers along the top are the cases per bin):</p>";
  int wi = 0;
  for (const auto& g : rep["window_products"]["windows"]) {
    if (!g["dominance"]["reliability"].empty())
      o << reliability_panel({{"first_lead_days", g["first_lead_days"]}, {"last_lead_days", g["last_lead_days"]},
                              {"reliability", g["dominance"]["reliability"]}},
                             wi, "dominance");
    ++wi;
  }
  return o.str();
}

// The charts: skill against lead, reliability, and the observed sequence
// against the guidance issued before it.
std::string chart_sections(const json& rep, const States& states) {
  std::vector<std::pair<double, json>> hit, mcbss, hss;
  for (const auto& l : rep["by_lead"]) {
    double x = l["lead_days"].get<double>();
    hit.emplace_back(x, l["hit_rate"]);
    mcbss.emplace_back(x, l["multicategory_brier_skill"]);
    hss.emplace_back(x, l["heidke"]);
  }
  std::ostringstream o;
  o << "<h2>Skill against lead</h2>"
    << line_chart("Skill against lead", {{"hit rate", hit}, {"Heidke", hss}, {"Brier skill", mcbss}}, -0.2, 1.0,
                  "lead (days)");
  o << "<h2>Reliability</h2>" << reliability_intro(rep) << decomposition_table(rep, states)
    << reliability_chart(rep["windows"]);
  o << "<h2>Observed sequence and the guidance issued before it</h2>" << sequence_chart(rep, states);
  return o.str();
}

// The leads at which an episode was caught, "4, 2, 1" (or a dash).
std::string caught_leads(const json& e) {
  std::string out;
  if (e.contains("caught_at"))
    for (const auto& c : e["caught_at"]) out += (out.empty() ? "" : ", ") + std::to_string(c["lead_days"].get<int>());
  return out.empty() ? "&ndash;" : out;
}

std::string lead_or_dash(const json& e, const char* key) {
  return !e.contains(key) || e[key].is_null() ? "&ndash;" : std::to_string(e[key].get<int>());
}

std::string episodes_table(const json& rep, const States& states) {
  const json& ep = rep["episodes"];
  std::ostringstream o;
  o << "<h2>Episodes of at least " << ep["min_days"] << " days</h2><p>caught " << ep["caught"] << ", missed "
    << ep["missed"] << ", false alarms " << ep["false_alarms"];
  if (ep.contains("catch_margin"))
    o << ". An issue catches an episode when, on the onset day, the regime is the most likely, ahead of the "
         "second state by at least "
      << fmt(ep["catch_margin"], "%.2f") << " and above its climatological frequency by at least "
      << fmt(ep["catch_excess"], "%.2f") << "; a false alarm is a run of as many days committed the same way "
         "that did not happen. Committed: the longest lead from which every later issue caught it.";
  if (ep.contains("not_scored"))
    o << " Not scored: " << ep["not_scored"]["under_way_at_start"]
      << " under way on the first observed day (onset unknown), " << ep["not_scored"]["no_issue_before_onset"]
      << " with no issue made before the onset.";
  o << "</p><table><tr><th class=\"l\">regime</th><th class=\"l\">onset</th><th class=\"l\">end</th><th>days</th>"
       "<th>issues</th><th>caught</th><th>caught at leads (days)</th><th>longest lead</th><th>committed from lead</th>"
       "</tr>";
  for (const auto& e : ep["list"])
    o << "<tr><td class=\"l\" style=\"color:" << state_colour(states, e["regime"]) << "\">"
      << esc(e["regime"].get<std::string>()) << " " << esc(e["name"].get<std::string>()) << "</td><td class=\"l\">"
      << e["onset"].get<std::string>() << "</td><td class=\"l\">" << e["end"].get<std::string>() << "</td><td>"
      << e["days"] << "</td><td>" << (e.contains("issues") ? e["issues"].dump() : "&ndash;") << "</td><td>"
      << (e["caught"].get<bool>() ? "yes" : "no") << "</td><td>" << caught_leads(e) << "</td><td>"
      << lead_or_dash(e, "longest_lead_days") << "</td><td>" << lead_or_dash(e, "committed_lead_days")
      << "</td></tr>";
  o << "</table>";
  return o.str();
}

// The months of the report in season order: the one after the largest gap
// first (Nov, Dec, Jan, ...).
std::vector<int> season_months(const json& by_month) {
  std::vector<int> months;
  for (const auto& [m, fb] : by_month.items()) months.push_back(std::stoi(m));
  std::sort(months.begin(), months.end());
  if (months.size() > 1) {
    std::size_t start = 0;
    int gap = months.front() + 12 - months.back();
    for (std::size_t i = 1; i < months.size(); ++i)
      if (months[i] - months[i - 1] > gap) {
        gap = months[i] - months[i - 1];
        start = i;
      }
    std::rotate(months.begin(), months.begin() + static_cast<long>(start), months.end());
  }
  return months;
}

// One row of the frequency-bias table: a label, then each state's bias.
std::string bias_row(const std::string& label, const json& bias, const States& states) {
  std::string row = "<tr><td>" + label + "</td>";
  for (const auto& s : states) row += "<td>" + fmt(bias[s]["bias"]) + "</td>";
  return row + "</tr>";
}

// Frequency bias by lead window, then by month.
std::string frequency_bias_table(const json& rep, const States& states) {
  std::ostringstream o;
  o << "<h2>Frequency bias (days forecast as the most likely / observed days)</h2><table><tr><th>lead days</th>";
  for (const auto& s : states) o << "<th>" << esc(s) << "</th>";
  o << "</tr>";
  for (const auto& w : rep["windows"]) {
    std::ostringstream label;
    label << w["first_lead_days"] << "&ndash;" << w["last_lead_days"];
    o << bias_row(label.str(), w["frequency_bias"], states);
  }
  const json& by_month = rep["frequency_bias_by_month"];
  for (int mo : season_months(by_month)) o << bias_row(kMonth[mo - 1], by_month[std::to_string(mo)], states);
  o << "</table>";
  return o.str();
}

std::string page_footer(const json& rep) {
  return "<p><small>isohypse " + esc(rep["provenance"]["version"].get<std::string>()) + ", regime model " +
         esc(rep["provenance"]["model"]["sha256"].get<std::string>().substr(0, 12)) + ", created " +
         rep["provenance"]["created"].get<std::string>() + "</small></p></body></html>\n";
}

// One line per lead range of the window products.
std::string window_products_text(const json& rep) {
  if (!rep.contains("window_products") || rep["window_products"]["windows"].empty()) return {};
  std::ostringstream o;
  o << "\nwindow products   scored  tied  dominance Brier skill  expected-days MAE  its skill\n";
  char line[200];
  auto e = [](const json& v) { return v.is_number() ? v.get<double>() : NAN; };
  for (const auto& g : rep["window_products"]["windows"]) {
    std::snprintf(line, sizeof line, "%3d-%-3d          %7d  %4d  %21.2f  %12.2f days  %9.2f\n",
                  g["first_lead_days"].get<int>(), g["last_lead_days"].get<int>(), g["cases"].get<int>(),
                  g["tied"].get<int>(), e(g["dominance"]["multicategory_brier_skill"]["estimate"]),
                  e(g["expected_days"]["mae"]), e(g["expected_days"]["skill"]["estimate"]));
    o << line;
  }
  return o.str();
}

}  // namespace

std::string verification_html(const json& rep) {
  const States states = rep["states"].get<States>();
  return page_head(rep) + summary_section(rep) + regimes_table(rep, states) + window_scores_table(rep) +
         raw_versus_calibrated_table(rep) + window_products_section(rep, states) + chart_sections(rep, states) +
         episodes_table(rep, states) + frequency_bias_table(rep, states) + page_footer(rep);
}

// Per window and state, the share of the Brier score that is reliability
// (reliability_share); "-" with too few days of one outcome.
std::string reliability_share_text(const json& rep, const std::vector<std::string>& states) {
  std::ostringstream o;
  char cell[64];
  o << "\nreliability / Brier score, (beyond sampling) / Brier score (" << rep["reliability"]["bins"]
    << " bins; '-': fewer than 10 days with or without the state)\nlead days";
  for (const auto& s : states) {
    std::snprintf(cell, sizeof cell, " %13s", s.c_str());
    o << cell;
  }
  o << "\n";
  for (const auto& w : rep["windows"]) {
    std::snprintf(cell, sizeof cell, "%3d-%-3d  ", w["first_lead_days"].get<int>(), w["last_lead_days"].get<int>());
    o << cell;
    for (const auto& s : states) {
      const json& r = w["regimes"][s];
      const double share = reliability_share(r, w["cases"].get<double>());
      const bool noise = r.contains("reliability_sampling_upper") && r["reliability_sampling_upper"].is_number() &&
                         r["reliability"].get<double>() <= r["reliability_sampling_upper"].get<double>();
      const double beyond = r.contains("reliability_beyond_sampling")
                                ? r["reliability_beyond_sampling"].get<double>() / r["brier"].get<double>()
                                : NAN;
      if (std::isfinite(share) && std::isfinite(beyond))
        std::snprintf(cell, sizeof cell, " %5.2f (%5.2f)%s", share, beyond, noise ? "~" : " ");
      else if (std::isfinite(share))
        std::snprintf(cell, sizeof cell, " %12.2f%s", share, noise ? "~" : " ");
      else
        std::snprintf(cell, sizeof cell, " %13s", "-");
      o << cell;
    }
    o << "\n";
  }
  o << "beyond sampling: the reliability term less what sampling alone gives a reliable forecast with the same "
       "probabilities on these cases (its mean; Ferro & Fricker 2012); ~: the term is within that sampling's "
    << rep["bootstrap"].value("confidence", 0.9) * 100
    << " % quantile, so these cases cannot tell it from 0 (the cases of one valid date share one outcome; "
       "consecutive days are drawn apart, so the quantile is a lower bound). Above 0.5 without ~: the probabilities "
       "are mis-calibrated, not just noisy\n";
  return o.str();
}

// The calibrated issues' raw against calibrated skill, one line per window
// (reports without calibration: nothing).
std::string raw_versus_calibrated_text(const json& rep) {
  if (!rep.contains("raw_versus_calibrated")) return {};
  const json& rc = rep["raw_versus_calibrated"];
  std::ostringstream o;
  o << "\nraw against calibrated (" << rc["issues"]["calibrated"] << " calibrated issues, " << rc["issues"]["raw"]
    << " without; the scores above use each issue's headline)\n"
       "lead days   cases  Brier skill raw  calibrated  reliability raw  calibrated  hit rate raw  calibrated\n";
  char line[200];
  auto e = [](const json& v) { return v.is_number() ? v.get<double>() : NAN; };
  for (const auto& w : rc["windows"]) {
    std::snprintf(line, sizeof line, "%3d-%-3d   %7d  %15.2f  %10.2f  %15.4f  %10.4f  %12.2f  %10.2f\n",
                  w["first_lead_days"].get<int>(), w["last_lead_days"].get<int>(), w["cases"].get<int>(),
                  e(w["raw"]["multicategory_brier_skill"]["estimate"]),
                  e(w["calibrated"]["multicategory_brier_skill"]["estimate"]), e(w["raw"]["reliability"]),
                  e(w["calibrated"]["reliability"]), e(w["raw"]["hit_rate"]), e(w["calibrated"]["hit_rate"]));
    o << line;
  }
  for (const auto& g : rc["window_products"]) {
    std::snprintf(line, sizeof line, "window %d-%d dominance Brier skill: raw %.2f, calibrated %.2f (%d windows)\n",
                  g["first_lead_days"].get<int>(), g["last_lead_days"].get<int>(),
                  e(g["raw"]["dominance_multicategory_brier_skill"]["estimate"]),
                  e(g["calibrated"]["dominance_multicategory_brier_skill"]["estimate"]), g["cases"].get<int>());
    o << line;
  }
  return o.str();
}

std::string verification_text(const json& rep) {
  std::ostringstream o;
  char line[200];
  o << "Verification of " << rep["guidance"]["files"] << " guidance issues, valid "
    << rep["period"]["from"].get<std::string>() << " to " << rep["period"]["to"].get<std::string>() << " ("
    << rep["cases"] << " pairs";
  if (all_months(rep))
    o << "; all months scored against monthly climatology, " << rep["out_of_season"]["cases"]
      << " pairs outside the model's season";
  else if (rep.contains("out_of_season") && rep["out_of_season"]["cases"].get<std::size_t>() > 0)
    o << "; " << rep["out_of_season"]["cases"] << " pairs outside the model's season not scored";
  o << ")\n\nlead days   cases  hit rate  Heidke  Brier skill vs climatology\n";
  for (const auto& w : rep["windows"]) {
    auto e = [](const json& i) { return i["estimate"].is_number() ? i["estimate"].get<double>() : NAN; };
    std::snprintf(line, sizeof line, "%3d-%-3d   %7d  %8.2f  %6.2f  %6.2f\n", w["first_lead_days"].get<int>(),
                  w["last_lead_days"].get<int>(), w["cases"].get<int>(), e(w["hit_rate"]), e(w["heidke"]),
                  e(w["multicategory_brier_skill"]));
    o << line;
  }
  o << "intervals (" << 100 * rep["bootstrap"]["confidence"].get<double>() << " %) in the report: " << block_summary(rep)
    << "\n";
  o << reliability_share_text(rep, rep["states"].get<std::vector<std::string>>());
  o << raw_versus_calibrated_text(rep);
  o << window_products_text(rep);
  o << "\nepisodes of " << rep["episodes"]["min_days"] << "+ days: caught " << rep["episodes"]["caught"] << ", missed "
    << rep["episodes"]["missed"] << "; false alarms " << rep["episodes"]["false_alarms"];
  if (rep["episodes"].contains("not_scored"))
    o << " (not scored: " << rep["episodes"]["not_scored"]["under_way_at_start"] << " under way at the start, "
      << rep["episodes"]["not_scored"]["no_issue_before_onset"] << " before the first issue)";
  o << "\n" << rep["caution"].get<std::string>() << "\n";
  return o.str();
}

}  // namespace isohypse
