#include <doctest/doctest.h>

#include <nlohmann/json.hpp>
#include <string>

#include "isohypse/stages/guidance_text.hpp"

using namespace isohypse;

namespace {

// A guidance document with just what guidance_text reads: two regimes, two
// windows, the second without any member covering enough of it, and no
// day or observation for the persistence line.
nlohmann::json two_windows() {
  using json = nlohmann::json;
  json g = {{"issue_date", "2026-01-15"},
            {"caution", "Guidance supports, never replaces, official warnings."},
            {"regimes", json::array({{{"id", "R1"}, {"name", "ridge"}}, {{"id", "R2"}, {"name", "trough"}}})},
            {"ensemble", {{"members", 32}, {"lag", 4}, {"weights", "exp:3"}}},
            {"bias_correction", {{"applied", true}}},
            {"persistence", {{"observed", nullptr}}},
            {"daily", json::array()}};  // no lead 0 and no observation: no persistence line
  g["windows"] = json::array();
  g["windows"].push_back({{"first_lead_days", 29}, {"last_lead_days", 45}, {"from", "2026-02-13"},
                          {"to", "2026-03-01"}, {"dominance", {{"R1", 0.25}, {"R2", 0.625}, {"no_regime", 0.125}}},
                          {"members", 32}, {"member_weight", 20.8}, {"initialisations", 4}, {"min_coverage", 0.8}});
  const json none = {{"R1", nullptr}, {"R2", nullptr}, {"no_regime", nullptr}};
  g["windows"].push_back({{"first_lead_days", 46}, {"last_lead_days", 60}, {"from", "2026-03-02"},
                          {"to", "2026-03-16"}, {"dominance", none},
                          {"members", 0}, {"member_weight", 0.0}, {"initialisations", 0}, {"min_coverage", 0.8}});
  return g;
}

std::string line_of(const std::string& text, const std::string& start) {
  const std::size_t at = text.find(start);
  return at == std::string::npos ? std::string() : text.substr(at, text.find('\n', at) - at);
}

}  // namespace

TEST_CASE("guidance text: window table shows the members counted and the initialisations") {
  const std::string text = guidance_text(two_windows());
  CHECK(text.find("probability  members") != std::string::npos);
  const std::string long_lead = line_of(text, " 29-45 ");
  CHECK(long_lead.find("R2") != std::string::npos);
  CHECK(long_lead.find("trough") != std::string::npos);
  CHECK(long_lead.find("63%") != std::string::npos);  // 0.625 rounded half away from zero
  CHECK(long_lead.find("32 from 4 initialisations") != std::string::npos);
  CHECK(text.find("covering at least 80% of a window's days") != std::string::npos);
}

TEST_CASE("guidance text: a window without dominance prints no probability") {
  // Before issue 13 such a window printed an empty state and "-100%".
  const std::string text = guidance_text(two_windows());
  const std::string empty = line_of(text, " 46-60 ");
  CHECK(empty.find("no member covers enough of the window") != std::string::npos);
  CHECK(empty.find("0 from 0 initialisations") != std::string::npos);
  CHECK(text.find("-100%") == std::string::npos);
}
