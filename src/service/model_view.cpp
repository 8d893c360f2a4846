#include "service/model_view.hpp"

#include <spdlog/spdlog.h>

#include <cmath>
#include <cstdio>
#include <filesystem>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/io/land_mask.hpp"
#include "isohypse/render/map_svg.hpp"

namespace isohypse {

namespace {

using json = nlohmann::json;

double round1(double v) { return std::round(v * 10) / 10; }

std::vector<Segment> coast_of(const std::string& land_mask, const Grid& grid) {
  LandMask mask;
  if (!land_mask.empty()) {
    try {
      mask = read_land_mask(land_mask);
    } catch (const Error& e) {
      spdlog::warn("no coastlines on the regime maps: {}", e.what());
    }
  }
  return coastline(mask, grid);
}

// Regime r's pattern as rows of latitude (ascending), metres rounded to 0.1.
json pattern_rows(const RegimeModel& model, int r) {
  const arma::uword nla = model.grid.n_lat(), nlo = model.grid.n_lon();
  json pattern = json::array();
  for (arma::uword i = 0; i < nla; ++i) {
    json row = json::array();
    for (arma::uword j = 0; j < nlo; ++j) row.push_back(round1(model.patterns(i * nlo + j, r)));
    pattern.push_back(row);
  }
  return pattern;
}

std::string map_title(const RegimeInfo& info) {
  char freq[16];
  std::snprintf(freq, sizeof freq, "%.0f%%", 100 * info.frequency);
  return info.id + "  " + info.name + "  (" + freq + " of days)";
}

json regime_view(const RegimeModel& model, int r) {
  json regime = regime_json(model.regimes[r]);
  regime["colour"] = regime_colour(r);
  regime["map"] = "/api/v1/model/regimes/" + model.regimes[r].id + ".svg";
  regime["pattern_m"] = pattern_rows(model, r);
  return regime;
}

json model_summary(const RegimeModel& model) {
  json regimes = json::array();
  for (int r = 0; r < model.k(); ++r) regimes.push_back(regime_view(model, r));
  json months = model.months;
  return {{"format", "isohypse-model-summary"},
          {"format_version", model.format_version},
          {"file", std::filesystem::path(model.path).filename().string()},
          {"sha256", model.sha256},
          {"domain", model.domain.to_string()},
          {"variable", model.variable},
          {"calendar", calendar_name(model.calendar)},
          {"season_months", months},
          {"no_regime_threshold", model.no_regime_threshold},
          {"no_regime_correlation", no_regime_rule_name(model.no_regime_rule)},
          {"eof_count", model.n_eof()},
          {"grid", {{"lat", std::vector<double>(model.grid.lat.begin(), model.grid.lat.end())},
                    {"lon", std::vector<double>(model.grid.lon.begin(), model.grid.lon.end())},
                    {"pattern_layout", "pattern_m[i_lat][i_lon], latitudes ascending, metres"}}},
          {"regimes", regimes},
          {"transitions", transition_json(model_states(model), model.transition,
                                          arma::conv_to<arma::mat>::from(model.transition_counts))},
          {"regime_count_table", {{"k_automatic", model.k_automatic},
                                  {"reason", model.k_reason},
                                  {"partition_agreement", number_or_null(model.partition_agreement)},
                                  {"rows", k_table_json(model.k_table)}}},
          {"palette", palette_json()},
          {"caution", kCaution}};
}

}  // namespace

ModelView::ModelView(const RegimeModel& model, const std::string& land_mask) {
  const std::vector<Segment> coast = coast_of(land_mask, model.grid);
  const double scale = arma::abs(model.patterns).max();  // one colour scale, so that maps compare
  for (int r = 0; r < model.k(); ++r)
    maps_[model.regimes[r].id] =
        regime_map_svg(model.patterns.col(r), model.grid, coast, map_title(model.regimes[r]), scale, regime_colour(r));
  model_json_ = model_summary(model).dump();
}

const std::string* ModelView::map_svg(const std::string& id) const {
  const auto it = maps_.find(id);
  return it == maps_.end() ? nullptr : &it->second;
}

}  // namespace isohypse
