// The step "raw against calibrated" of the post-mortem
// (src/stages/verify/raw_versus_calibrated.hpp) on planted cases whose
// answer is known: raw probabilities equal to the climatological frequencies
// have a multi-category Brier skill of exactly 0, calibrated ones that put 1
// on the observed state a skill of 1 and a reliability term of 0 (Wilks 2011,
// Statistical Methods in the Atmospheric Sciences, 3rd ed., 8.4.2; the skill
// score 1 - BS / BS_clim).
#include <doctest/doctest.h>

#include <cmath>

#include "stages/verify/raw_versus_calibrated.hpp"

using namespace isohypse;
using namespace isohypse::verification;

namespace {

StateClimatology climate() {
  StateClimatology c;
  c.states = {"R1", "R2", "no_regime"};
  c.frequency = arma::vec{0.5, 0.3, 0.2};
  return c;
}

// Three issues, a day apart, leads 0-2: the first without calibration (its
// headline probabilities wrong on purpose), the others calibrated.
Cases planted_cases(GuidanceSet& guidance) {
  Cases cases;
  const int observed[] = {0, 1, 2, 0, 0, 1, 1, 0, 2};
  for (int i = 0; i < 3; ++i) {
    GuidanceIssue issue;
    issue.calibrated = i > 0;
    guidance.issues.push_back(issue);
    for (int lead = 0; lead <= 2; ++lead) {
      Case c;
      c.issue = i;
      c.lead = lead;
      c.month = 1;
      c.issue_day = 1000 + i;
      c.valid = c.issue_day + lead;
      c.observed = observed[3 * i + lead];
      c.p = arma::vec(3, arma::fill::zeros);
      c.p(i > 0 ? c.observed : (c.observed + 1) % 3) = 1.0;
      c.most_likely = static_cast<int>(c.p.index_max());
      if (i > 0) {
        c.raw_p = climate().frequency;
        c.raw_most_likely = 0;
      }
      cases.list.push_back(c);
    }
  }
  cases.max_lead = 2;
  return cases;
}

}  // namespace

TEST_CASE("raw against calibrated: climatology scores 0 and a perfect calibration 1 over the calibrated issues") {
  GuidanceSet guidance;
  const Cases cases = planted_cases(guidance);
  VerifyConfig config;
  config.windows = {{0, 2}};
  config.bootstrap_resamples = 50;
  const nlohmann::json rc = raw_versus_calibrated(guidance, cases, climate(), config, nlohmann::json::array());
  CHECK(rc["issues"]["calibrated"] == 2);
  CHECK(rc["issues"]["raw"] == 1);
  REQUIRE(rc["windows"].size() == 1);
  const nlohmann::json& w = rc["windows"][0];
  CHECK(w["cases"] == 6);  // the first issue's 3 cases are left out
  CHECK(w["raw"]["multicategory_brier_skill"]["estimate"].get<double>() == doctest::Approx(0.0).epsilon(1e-12));
  CHECK(w["calibrated"]["multicategory_brier_skill"]["estimate"].get<double>() == doctest::Approx(1.0));
  CHECK(w["calibrated"]["reliability"].get<double>() == doctest::Approx(0.0));
  CHECK(w["skill_difference"]["estimate"].get<double>() == doctest::Approx(1.0));
  // Raw: R1 most likely everywhere, observed on 3 of the 6 days; calibrated: every day.
  CHECK(w["raw"]["hit_rate"].get<double>() == doctest::Approx(0.5));
  CHECK(w["calibrated"]["hit_rate"].get<double>() == doctest::Approx(1.0));
  // Raw reliability: one bin per state holding every case, (f - obar)^2 summed:
  // R1 (0.5 - 3/6)^2 + R2 (0.3 - 2/6)^2 + no regime (0.2 - 1/6)^2.
  const double rel = 0.0 + std::pow(0.3 - 2.0 / 6, 2) + std::pow(0.2 - 1.0 / 6, 2);
  CHECK(w["raw"]["reliability"].get<double>() == doctest::Approx(rel));
}

TEST_CASE("raw against calibrated: nothing without a calibrated issue") {
  GuidanceSet guidance;
  Cases cases = planted_cases(guidance);
  for (auto& issue : guidance.issues) issue.calibrated = false;
  VerifyConfig config;
  CHECK(raw_versus_calibrated(guidance, cases, climate(), config, nlohmann::json::array()).is_null());
}
