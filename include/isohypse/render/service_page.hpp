// The forecaster's page served at /: one self-contained HTML document
// (src/render/service_page.html, embedded at build time). Its small script
// reads the service's own API (same origin) and draws the charts as inline
// SVG; nothing is fetched from anywhere else.
#pragma once

#include <string>

namespace isohypse {

const std::string& service_page_html();

}  // namespace isohypse
