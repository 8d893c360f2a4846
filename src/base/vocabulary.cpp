#include "isohypse/base/vocabulary.hpp"

#include <array>
#include <cmath>
#include <sstream>

#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

// Regimes: a palette that stays distinguishable for common colour-vision
// deficiencies (after Wong 2011, Nature Methods 8, 441), extended with three
// of Tol's muted colours (Tol 2021, "Colour schemes", SRON technical note).
constexpr std::array<const char*, 10> kRegimeColours = {"#E69F00", "#56B4E9", "#009E73", "#CC79A7", "#0072B2",
                                                        "#D55E00", "#F0E442", "#882255", "#44AA99", "#999933"};
constexpr const char* kNoRegimeColour = "#c8c8c8";
// Not regimes: near-black, greys and browns, none of them in the list above.
constexpr std::array<const char*, 6> kSeriesColours = {"#1b1b1b", "#6b6b6b", "#8c6d31", "#5b4a8b", "#a0a0a0",
                                                       "#3f6f6f"};

}  // namespace

std::vector<LeadWindow> default_windows() { return {{1, 3}, {4, 7}, {8, 14}, {15, 28}, {29, 45}}; }

std::vector<LeadWindow> parse_windows(const std::string& text) {
  std::vector<LeadWindow> out;
  std::stringstream ss(text);
  std::string item;
  while (std::getline(ss, item, ',')) {
    int a = 0, b = 0;
    char dash = 0;
    std::stringstream is(item);
    if (!(is >> a >> dash >> b) || dash != '-' || a < 0 || b < a)
      throw InputError("--windows: '" + item + "' is not a lead range FIRST-LAST (e.g. 1-3,4-7,8-14)");
    out.emplace_back(a, b);
  }
  if (out.empty()) throw InputError("--windows: no windows given");
  return out;
}

std::vector<std::string> state_list(const std::vector<std::string>& regime_ids) {
  std::vector<std::string> s = regime_ids;
  s.emplace_back(kNoRegimeState);
  return s;
}

std::string regime_colour(int regime_index) {
  const int n = static_cast<int>(kRegimeColours.size());
  return kRegimeColours[((regime_index % n) + n) % n];
}

std::string no_regime_colour() { return kNoRegimeColour; }

std::string state_colour(const std::vector<std::string>& states, const std::string& state) {
  if (state == kNoRegimeState) return kNoRegimeColour;
  for (std::size_t i = 0; i < states.size(); ++i)
    if (states[i] == state) return regime_colour(static_cast<int>(i));
  return kNoRegimeColour;
}

std::string series_colour(int series_index) {
  const int n = static_cast<int>(kSeriesColours.size());
  return kSeriesColours[((series_index % n) + n) % n];
}

nlohmann::json palette_json() {
  return {{"regimes", std::vector<std::string>(kRegimeColours.begin(), kRegimeColours.end())},
          {"no_regime", kNoRegimeColour},
          {"series", std::vector<std::string>(kSeriesColours.begin(), kSeriesColours.end())}};
}

std::string utc_timestamp(std::time_t t) {
  std::tm tm{};
  gmtime_r(&t, &tm);
  char stamp[32];
  std::strftime(stamp, sizeof stamp, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return stamp;
}

std::string utc_timestamp_now() { return utc_timestamp(std::time(nullptr)); }

nlohmann::json number_or_null(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(); }

std::string html_escape(const std::string& s) {
  std::string o;
  o.reserve(s.size());
  for (char c : s) {
    switch (c) {
      case '<': o += "&lt;"; break;
      case '>': o += "&gt;"; break;
      case '&': o += "&amp;"; break;
      case '"': o += "&quot;"; break;
      case '\'': o += "&#39;"; break;
      default: o += c;
    }
  }
  return o;
}

}  // namespace isohypse
