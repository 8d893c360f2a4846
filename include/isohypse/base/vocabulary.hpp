// The project's shared vocabulary: terms that several outputs use, defined
// once so the guidance JSON, the model summary, the service's API, the live
// page, the verification report and the maps always agree.
//
// - States: a model's regime ids in the model's order, then the no-regime
//   state, always last. Every probability vector and transition matrix in
//   every output uses this order.
// - Colours: one colour per regime (by its position in the model's order),
//   grey for the no-regime state, and a separate palette for things that are
//   not regimes (lead windows, score lines), so a line is never mistaken for
//   a regime.
// - Timestamps are UTC, "YYYY-MM-DDTHH:MM:SSZ".
// - JSON numbers: NaN and infinities are written as null.
#pragma once

#include <cstdint>
#include <ctime>
#include <nlohmann/json.hpp>
#include <string>
#include <utility>
#include <vector>

namespace isohypse {

// The caution every product carries.
inline constexpr const char* kCaution =
    "Regime guidance supports, and never replaces, official warnings and the judgement of licensed forecasters.";

// The default seed of every random choice (k-means, surrogates, randomized
// EOFs, bootstrap); the seed used always goes into provenance.
inline constexpr std::uint64_t kDefaultSeed = 20261202;

// The id of the no-regime state, last in every list of states.
inline constexpr const char* kNoRegimeState = "no_regime";
inline constexpr const char* kNoRegimeName = "no regime";

// A lead window in whole days, first and last lead inclusive.
using LeadWindow = std::pair<int, int>;
// The default lead windows of guidance and verification: days 1-3, 4-7,
// 8-14, 15-28 and 29-45.
std::vector<LeadWindow> default_windows();
// "1-3,4-7,8-14": lead windows FIRST-LAST separated by commas. Throws
// InputError naming --windows and the item that is not a range.
std::vector<LeadWindow> parse_windows(const std::string& text);

// The list of states: the regime ids, then kNoRegimeState.
std::vector<std::string> state_list(const std::vector<std::string>& regime_ids);

// The colour ("#rrggbb") of the regime at `regime_index` in the model's
// order; indices past the palette cycle.
std::string regime_colour(int regime_index);
// The no-regime state's colour (grey).
std::string no_regime_colour();
// The colour of a state in a list of states (kNoRegimeState grey; an unknown
// state grey too).
std::string state_colour(const std::vector<std::string>& states, const std::string& state);
// Colours for what is not a regime (lead windows, score lines): none of them
// is a regime colour or the no-regime grey.
std::string series_colour(int series_index);
// The whole palette as JSON: {"regimes": [...], "no_regime": "...",
// "series": [...]} (the service gives it to the page).
nlohmann::json palette_json();

// UTC timestamps, "YYYY-MM-DDTHH:MM:SSZ".
std::string utc_timestamp(std::time_t t);
std::string utc_timestamp_now();

// A number for JSON: null when not finite.
nlohmann::json number_or_null(double v);

// Text made safe for HTML and SVG (both elements and quoted attributes).
std::string html_escape(const std::string& s);

}  // namespace isohypse
