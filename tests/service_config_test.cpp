// The service's settings: read from JSON, checked in one place, and turned
// into the classify and verify stages' settings in one place.
#include <doctest/doctest.h>

#include "isohypse/base/error.hpp"
#include "isohypse/service/service_config.hpp"

using namespace isohypse;

namespace {

ServiceConfig example() {
  return ServiceConfig::from_json({{"model", "m.nc"},
                                   {"inbox", "in"},
                                   {"archive", "arch"},
                                   {"reforecasts", {"rf/*.nc"}},
                                   {"observed", {"an/a.nc", "an/b.nc"}},
                                   {"variable", "zg"},
                                   {"lag", 4},
                                   {"weights", "exp:2.5"},
                                   {"comment", "a note"}},
                                  "service.json");
}

}  // namespace

TEST_CASE("service config: classify_options carries the classification settings") {
  const ServiceConfig c = example();
  c.validate();
  const ClassifyConfig cc = c.classify_options();
  CHECK(cc.reforecasts == std::vector<std::string>{"rf/*.nc"});
  CHECK(cc.analysis == std::vector<std::string>{"an/a.nc", "an/b.nc"});
  CHECK(cc.variable == "zg");
  CHECK(cc.lag == 4);
  CHECK(cc.weights.scheme == WeightScheme::Exponential);
  CHECK(cc.weights.timescale_days == doctest::Approx(2.5));
  CHECK(cc.forecasts.empty());  // the run adds them
  CHECK_FALSE(cc.issue_date);
  CHECK(cc.windows == default_windows());
}

TEST_CASE("service config: verify_options carries the verification settings") {
  const VerifyConfig vc = example().verify_options();
  CHECK(vc.observed == std::vector<std::string>{"an/a.nc", "an/b.nc"});
  CHECK(vc.variable == "zg");
  CHECK(vc.guidance.empty());  // the request adds them
  CHECK(vc.windows == default_windows());
  CHECK(vc.seed == kDefaultSeed);
  CHECK(vc.reliability_bins == 10);
  CHECK_FALSE(vc.block_length.automatic);
  CHECK(vc.block_length.days == 0);  // the lag span + 7 days
  CHECK(vc.catch_margin == doctest::Approx(0.10));
  CHECK(vc.catch_excess == doctest::Approx(0.15));
}

TEST_CASE("service config: the post-mortem keys reach verify and are checked") {
  ServiceConfig c = ServiceConfig::from_json({{"model", "m.nc"},
                                              {"inbox", "in"},
                                              {"archive", "arch"},
                                              {"reliability_bins", 5},
                                              {"block_days", "auto"},
                                              {"catch_margin", 0.2},
                                              {"catch_excess", 0.05}},
                                             "service.json");
  c.validate();
  VerifyConfig vc = c.verify_options();
  CHECK(vc.reliability_bins == 5);
  CHECK(vc.block_length.automatic);
  CHECK(vc.catch_margin == doctest::Approx(0.2));
  CHECK(vc.catch_excess == doctest::Approx(0.05));
  c.block_days = "14";
  CHECK(c.verify_options().block_length.days == 14);
  c.block_days = "fortnight";
  CHECK_THROWS_WITH_AS(c.validate(), doctest::Contains("--block-days"), InputError);
  c.block_days = "lag+7";
  c.reliability_bins = 1;
  CHECK_THROWS_WITH_AS(c.validate(), doctest::Contains("--bins"), InputError);
  c.reliability_bins = 10;
  c.catch_excess = 1.5;
  CHECK_THROWS_WITH_AS(c.validate(), doctest::Contains("catch_excess"), InputError);
}

TEST_CASE("service config: validate names the setting at fault") {
  ServiceConfig c = example();
  c.weights = "cubic";
  CHECK_THROWS_AS(c.validate(), InputError);
  CHECK_THROWS_AS(c.classify_options(), InputError);
  c = example();
  c.poll_seconds = 0.01;
  CHECK_THROWS_WITH_AS(c.validate(), doctest::Contains("poll_seconds"), InputError);
  c = example();
  c.listen = "8642";
  CHECK_THROWS_WITH_AS(c.validate(), doctest::Contains("ADDRESS:PORT"), InputError);
  c = example();
  c.inbox.clear();
  CHECK_THROWS_WITH_AS(c.validate(), doctest::Contains("inbox"), InputError);
  CHECK_THROWS_WITH_AS(ServiceConfig::from_json({{"modle", "m.nc"}}, "service.json"), doctest::Contains("modle"),
                       InputError);
}
