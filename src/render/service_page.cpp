// The forecaster's page: src/render/service_page.html, embedded at build time
// (CMake writes it into service_page_html.inc as a raw string literal). The
// shared vocabulary is filled in once: {{PALETTE}} (the regime colours as
// JSON) and {{CAUTION}}.
#include "isohypse/render/service_page.hpp"

#include "isohypse/base/vocabulary.hpp"

namespace isohypse {

namespace {

void replace_all(std::string& s, const std::string& from, const std::string& to) {
  for (std::size_t at = s.find(from); at != std::string::npos; at = s.find(from, at + to.size()))
    s.replace(at, from.size(), to);
}

std::string filled_page() {
  std::string page =
#include "service_page_html.inc"
      ;
  replace_all(page, "{{PALETTE}}", palette_json().dump());
  replace_all(page, "{{CAUTION}}", html_escape(kCaution));
  return page;
}

}  // namespace

const std::string& service_page_html() {
  static const std::string page = filled_page();
  return page;
}

}  // namespace isohypse
