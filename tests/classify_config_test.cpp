// The classify stage's settings are checked in one place
// (ClassifyConfig::validate), before any file is touched; and its steps
// refuse results of another step that do not fit together (a bug) with
// InternalError, not as the user's error.
#include <doctest/doctest.h>

#include <functional>
#include <optional>
#include <string>

#include "isohypse/base/error.hpp"
#include "isohypse/stages/classify.hpp"
#include "stages/classify/guidance_document.hpp"
#include "stages/classify/member_labels.hpp"
#include "stages/classify/window_statistics.hpp"

using namespace isohypse;

namespace {

ClassifyConfig good_config() {
  ClassifyConfig c;
  c.forecasts = {"forecasts/*.nc"};
  return c;
}

// The message of the InputError that validate() throws for the config after `change`; "" when none.
std::string refusal(const std::function<void(ClassifyConfig&)>& change) {
  ClassifyConfig c = good_config();
  change(c);
  try {
    c.validate();
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

bool names(const std::string& message, const std::string& setting, const std::string& flag) {
  return message.find(setting) != std::string::npos && message.find(flag) != std::string::npos;
}

}  // namespace

TEST_CASE("classify config: defaults and the edges of each range are accepted") {
  CHECK_NOTHROW(good_config().validate());
  CHECK(refusal([](ClassifyConfig& c) { c.lag = 0; }).empty());
  CHECK(refusal([](ClassifyConfig& c) { c.lag = 7; }).empty());
  CHECK(refusal([](ClassifyConfig& c) { c.reforecast_window_days = 0; }).empty());
  CHECK(refusal([](ClassifyConfig& c) { c.reforecast_window_days = 60; }).empty());
  CHECK(refusal([](ClassifyConfig& c) { c.lead_smoothing_days = 0; }).empty());
  CHECK(refusal([](ClassifyConfig& c) { c.lead_smoothing_days = 15; }).empty());
  CHECK(refusal([](ClassifyConfig& c) { c.threads = 0; }).empty());
  CHECK(refusal([](ClassifyConfig& c) { c.windows = {{0, 0}, {3, 45}}; }).empty());
}

TEST_CASE("classify config: each bad value is refused naming the setting and its flag") {
  const std::string lag = refusal([](ClassifyConfig& c) { c.lag = -2; });
  CHECK(names(lag, "lag", "--lag"));
  CHECK(lag.find("-2") != std::string::npos);
  CHECK(names(refusal([](ClassifyConfig& c) { c.reforecast_window_days = -1; }), "reforecast_window_days",
              "--reforecast-window"));
  CHECK(names(refusal([](ClassifyConfig& c) { c.reforecast_window_days = 61; }), "reforecast_window_days",
              "--reforecast-window"));
  CHECK(names(refusal([](ClassifyConfig& c) { c.lead_smoothing_days = -1; }), "lead_smoothing_days",
              "--lead-smoothing"));
  CHECK(names(refusal([](ClassifyConfig& c) { c.lead_smoothing_days = 16; }), "lead_smoothing_days",
              "--lead-smoothing"));
  CHECK(names(refusal([](ClassifyConfig& c) { c.threads = -1; }), "threads", "--threads"));
  CHECK(names(refusal([](ClassifyConfig& c) { c.windows.clear(); }), "windows", "--windows"));
  const std::string reversed = refusal([](ClassifyConfig& c) { c.windows = {{1, 3}, {5, 2}}; });
  CHECK(names(reversed, "windows", "--windows"));
  CHECK(reversed.find("5-2") != std::string::npos);
  CHECK(names(refusal([](ClassifyConfig& c) { c.windows = {{-1, 3}}; }), "windows", "--windows"));
  CHECK(names(refusal([](ClassifyConfig& c) { c.forecasts.clear(); }), "forecasts", "--forecasts"));
}

TEST_CASE("classify config: classify_forecasts refuses a bad config before touching any file") {
  ClassifyConfig c;
  c.forecasts = {"/nonexistent/isohypse-test/fc_20260115.nc"};
  c.lag = -2;
  const RegimeModel model;
  std::string message;
  try {
    classify_forecasts(model, c);
  } catch (const InputError& e) {
    message = e.what();
  }
  CHECK(names(message, "lag", "--lag"));
  CHECK(message.find("nonexistent") == std::string::npos);
}

TEST_CASE("classify steps: results that do not fit together are an internal error") {
  const RegimeModel model;  // k = 0: one state (no regime)
  const ClassifyConfig cfg = good_config();
  const ClassifyProgress quiet = [](const std::string&, int, int) {};

  SUBCASE("a climate for an initialisation the ensemble does not hold") {
    const LaggedEnsemble ensemble;  // no initialisation chosen
    ModelClimate climate;
    climate.by_initialisation.emplace_back(0, 0);
    CHECK_THROWS_AS(label_members(model, cfg, ensemble, climate, quiet), InternalError);
  }
  SUBCASE("a transition matrix of another number of states") {
    CHECK_THROWS_AS(window_statistics(model, cfg, {}), InternalError);  // 0 x 0 for 1 state
  }
  SUBCASE("statistics of another number of states than the model") {
    const LaggedEnsemble ensemble;
    const ModelClimate climate;
    MemberLabels labels;
    WindowStatistics statistics;
    statistics.n_states = 3;
    const std::optional<ObservedRegime> observed;
    const PersistenceClimatology persistence;
    const std::optional<CalibratedGuidance> calibrated;
    CHECK_THROWS_AS(
        guidance_document(model, cfg, {ensemble, climate, labels, statistics, observed, persistence, calibrated}),
        InternalError);
  }
}
