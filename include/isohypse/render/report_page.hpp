// The verification report rendered: a self-contained HTML page with inline
// SVG (no scripts, fonts or network), and the headline numbers for the
// terminal. Both take the report JSON that stages/verify.hpp builds.
#pragma once

#include <nlohmann/json.hpp>
#include <string>

namespace isohypse {

// One self-contained HTML page (inline SVG, no scripts or network).
std::string verification_html(const nlohmann::json& report);

// The headline numbers for the terminal.
std::string verification_text(const nlohmann::json& report);

}  // namespace isohypse
