// The shared vocabulary (base/vocabulary.hpp) and the JSON of a regime, the k
// table and a transition matrix (numerics/regime_model.hpp): defined once,
// read back, and models written with the keys used before unification still
// read.
#include <doctest/doctest.h>

#include <cmath>
#include <limits>
#include <set>

#include "isohypse/base/error.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/regime_model.hpp"

using namespace isohypse;

TEST_CASE("states: regime ids in order then the no-regime state") {
  const auto s = state_list({"R1", "R2", "R3"});
  REQUIRE(s.size() == 4);
  CHECK(s[0] == "R1");
  CHECK(s[2] == "R3");
  CHECK(s[3] == kNoRegimeState);
}

TEST_CASE("palette: one colour per regime and series colours apart from them") {
  const std::vector<std::string> states = state_list({"R1", "R2", "R3", "R4"});
  std::set<std::string> regime;
  for (int i = 0; i < 10; ++i) regime.insert(regime_colour(i));
  CHECK(regime.size() == 10);  // ten distinct regime colours before the palette cycles
  CHECK(regime.count(no_regime_colour()) == 0);
  for (int i = 0; i < 6; ++i) {
    CHECK(regime.count(series_colour(i)) == 0);
    CHECK(series_colour(i) != no_regime_colour());
  }
  CHECK(state_colour(states, "R3") == regime_colour(2));
  CHECK(state_colour(states, kNoRegimeState) == no_regime_colour());
  CHECK(state_colour(states, "R9") == no_regime_colour());
  const auto p = palette_json();
  CHECK(p["regimes"][1].get<std::string>() == regime_colour(1));
  CHECK(p["no_regime"].get<std::string>() == no_regime_colour());
}

TEST_CASE("lead windows: defaults and parsing") {
  const auto d = default_windows();
  REQUIRE(d.size() == 5);
  CHECK(d.front() == LeadWindow{1, 3});
  CHECK(d.back() == LeadWindow{29, 45});
  CHECK(parse_windows("1-3,10-20") == std::vector<LeadWindow>{{1, 3}, {10, 20}});
  CHECK_THROWS_AS(parse_windows("5-2"), InputError);
  CHECK_THROWS_AS(parse_windows("five"), InputError);
  CHECK_THROWS_AS(parse_windows(""), InputError);
}

TEST_CASE("UTC timestamps null for non-finite numbers and HTML escaping") {
  CHECK(utc_timestamp(0) == "1970-01-01T00:00:00Z");
  CHECK(utc_timestamp(1764633600) == "2025-12-02T00:00:00Z");
  CHECK(number_or_null(std::nan("")).is_null());
  CHECK(number_or_null(std::numeric_limits<double>::infinity()).is_null());
  CHECK(number_or_null(0.25).get<double>() == 0.25);
  CHECK(html_escape("<a href=\"x\">R1 & 'R2'</a>") == "&lt;a href=&quot;x&quot;&gt;R1 &amp; &#39;R2&#39;&lt;/a&gt;");
}

TEST_CASE("regime JSON round trip and the keys of models written before unification") {
  RegimeInfo r;
  r.id = "R2";
  r.name = "trough 45N 20W -150 m";
  r.frequency = 0.25;
  r.mean_run = 6.5;
  r.median_run = 5;
  r.longest_run = 21;
  r.episodes = 12;
  r.residence_days = arma::datum::inf;
  const nlohmann::json j = regime_json(r);
  CHECK(j["mean_run_days"].get<double>() == 6.5);
  CHECK(j["residence_days"].is_null());
  const RegimeInfo back = regime_from_json(j);
  CHECK(back.name == r.name);
  CHECK(back.longest_run == 21);
  CHECK(std::isinf(back.residence_days));
  // As format-1 models wrote it before the keys were unified.
  const nlohmann::json old = {{"id", "R1"},         {"name", "ridge"},   {"frequency", 0.3},
                              {"mean_run", 7.25},   {"median_run", 6.0}, {"longest_run", 30},
                              {"episodes", 9},      {"residence_days", 8.5}};
  const RegimeInfo o = regime_from_json(old);
  CHECK(o.mean_run == 7.25);
  CHECK(o.median_run == 6.0);
  CHECK(o.longest_run == 30);
  CHECK(o.episodes == 9);
  CHECK(o.residence_days == 8.5);
  CHECK_THROWS_AS(regime_from_json(nlohmann::json{{"id", "R1"}}), nlohmann::json::exception);
}

TEST_CASE("k table JSON round trip and the former key index") {
  RegimeCountEntry a;
  a.k = 3;
  a.index = 0.91;
  a.index_spread = 0.004;
  a.variance_ratio = 1.7;
  a.surrogate_index = {0.8, 0.85};
  a.surrogate_ratio = {1.1, 1.2};
  a.surrogate_level = 0.85;
  a.p_index = a.p_ratio = 1.0 / 3.0;
  a.holm_level = 0.05;
  a.significant = true;
  RegimeCountEntry b = a;
  b.k = 4;
  b.stopped_early = true;
  b.significant = false;
  const nlohmann::json j = k_table_json({a, b});
  CHECK(j[0]["classifiability"].get<double>() == 0.91);
  CHECK(j[0]["surrogates"].get<int>() == 2);
  CHECK(j[0]["surrogate_classifiability"][1].get<double>() == doctest::Approx(0.85).epsilon(1e-7));
  CHECK_FALSE(j[1]["significant"].get<bool>());
  const auto back = k_table_from_json(j);
  REQUIRE(back.size() == 2);
  CHECK(back[1].surrogate_level == 0.85);
  CHECK(back[1].stopped_early);
  CHECK(back[0].p_ratio == doctest::Approx(1.0 / 3.0));
  CHECK(back[0].surrogate_ratio.size() == 2);
  // A row of a model written before the p-values: the rest unknown (NaN).
  const auto old = k_table_from_json(nlohmann::json::array(
      {{{"k", 5}, {"index", 0.77}, {"surrogate_level", 0.7}, {"significant", true}}}));
  CHECK(old[0].index == 0.77);
  CHECK(std::isnan(old[0].p_index));
  CHECK(old[0].surrogates() == 0);
}

TEST_CASE("transition matrix JSON carries its states and nulls") {
  const arma::mat p = {{0.5, 0.5}, {arma::datum::nan, 1.0}};
  const nlohmann::json j = transition_json({"R1", kNoRegimeState}, p, arma::mat{{2, 2}, {0, 3}});
  CHECK(j["states"][1] == kNoRegimeState);
  CHECK(j["probabilities"][1][0].is_null());
  CHECK(j["counts"][1][1].get<double>() == 3);
  CHECK_FALSE(transition_json({"R1"}, arma::mat(1, 1, arma::fill::ones)).contains("counts"));
}
