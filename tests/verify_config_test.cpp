// VerifyConfig::validate: every setting of the post-mortem checked in one
// place, so the CLI and the service's /api/v1/verification refuse the same
// values with the same message naming the setting.
#include <doctest/doctest.h>

#include <cmath>
#include <string>

#include "isohypse/base/error.hpp"
#include "isohypse/stages/verify.hpp"

using namespace isohypse;

namespace {

VerifyConfig usable() {
  VerifyConfig c;
  c.guidance = {"archive"};
  return c;
}

// The message of the InputError that validate() throws, or "" when it accepts.
std::string refusal(const VerifyConfig& c) {
  try {
    c.validate();
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

bool names(const std::string& message, const std::string& setting) {
  return message.find(setting) != std::string::npos;
}

}  // namespace

TEST_CASE("verify config: the defaults with one guidance path are accepted") {
  CHECK(refusal(usable()).empty());
  VerifyConfig c = usable();
  c.from = make_date(2026, 1, 1, Calendar::ProlepticGregorian);
  c.to = c.from;
  c.bootstrap_resamples = 10;
  c.windows = {{0, 0}, {1, 45}};
  c.confidence = 0.99;
  c.min_episode_days = 1;
  CHECK(refusal(c).empty());
}

TEST_CASE("verify config: no guidance path is refused naming guidance") {
  VerifyConfig c = usable();
  c.guidance.clear();
  CHECK(names(refusal(c), "--guidance"));
}

TEST_CASE("verify config: from after to is refused naming both") {
  VerifyConfig c = usable();
  c.from = make_date(2026, 2, 1, Calendar::ProlepticGregorian);
  c.to = make_date(2026, 1, 31, Calendar::ProlepticGregorian);
  const std::string m = refusal(c);
  CHECK(names(m, "from 2026-02-01 is after to 2026-01-31"));
  CHECK(names(m, "--from"));
}

TEST_CASE("verify config: fewer than 10 bootstrap resamples are refused naming bootstrap") {
  VerifyConfig c = usable();
  c.bootstrap_resamples = 9;
  CHECK(names(refusal(c), "bootstrap_resamples 9"));
  CHECK(names(refusal(c), "--bootstrap"));
}

TEST_CASE("verify config: malformed lead windows are refused naming windows") {
  VerifyConfig c = usable();
  c.windows.clear();
  CHECK(names(refusal(c), "windows: no lead windows"));
  c.windows = {{1, 3}, {7, 4}};
  CHECK(names(refusal(c), "windows: 7-4"));
  c.windows = {{-1, 3}};
  CHECK(names(refusal(c), "windows: -1-3"));
}

TEST_CASE("verify config: a confidence outside the open interval 0 to 1 is refused naming confidence") {
  for (double level : {0.0, 1.0, -0.5, 1.5, std::nan("")}) {
    VerifyConfig c = usable();
    c.confidence = level;
    CHECK(names(refusal(c), "confidence"));
  }
}

TEST_CASE("verify config: min_episode_days below 1 is refused naming it") {
  VerifyConfig c = usable();
  c.min_episode_days = 0;
  CHECK(names(refusal(c), "min_episode_days 0"));
}

TEST_CASE("verify config: fewer than 2 reliability bins are refused naming --bins") {
  VerifyConfig c = usable();
  c.reliability_bins = 2;
  CHECK(refusal(c).empty());
  for (int bins : {1, 0, -3}) {
    CAPTURE(bins);
    c.reliability_bins = bins;
    const std::string m = refusal(c);
    CHECK(names(m, "reliability_bins " + std::to_string(bins)));
    CHECK(names(m, "--bins"));
  }
}

TEST_CASE("verify_guidance validates its config before anything else") {
  // An empty model and a missing archive: only the config check can speak first.
  RegimeModel model;
  VerifyConfig c = usable();
  c.guidance = {"/nonexistent/isohypse-archive"};
  c.bootstrap_resamples = 5;
  try {
    verify_guidance(model, c);
    FAIL("verify_guidance accepted 5 bootstrap resamples");
  } catch (const InputError& e) {
    CHECK(names(e.what(), "bootstrap_resamples 5"));
  }
}
