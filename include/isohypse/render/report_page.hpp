// The verification report rendered: a self-contained HTML page with inline
// SVG (no scripts, fonts or network), and the headline numbers for the
// terminal. Both take the report JSON that stages/verify.hpp builds.
// Colours come from base/vocabulary.hpp: state_colour for everything
// coloured by regime (the sequence chart, regime ids in the tables),
// series_colour for lines that are not regimes (score lines, lead windows).
#pragma once

#include <nlohmann/json.hpp>
#include <string>

namespace isohypse {

// One self-contained HTML page (inline SVG, no scripts or network): summary,
// regimes, skill by window, charts (skill against lead, reliability, observed
// sequence against the guidance), episodes, frequency bias.
std::string verification_html(const nlohmann::json& report);

// The headline numbers for the terminal.
std::string verification_text(const nlohmann::json& report);

}  // namespace isohypse
