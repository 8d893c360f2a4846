// The intervals of the post-mortem: the block length setting (--block-days)
// and the moving-block bootstrap behind every headline interval
// (Kuensch 1989, Ann. Statist. 17, 1217-1241).
#include <doctest/doctest.h>

#include <string>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/block_bootstrap.hpp"
#include "isohypse/stages/verify.hpp"
#include "stages/verify/case_scores.hpp"

using namespace isohypse;
using namespace isohypse::verification;

namespace {

// The message of the InputError that BlockLength::parse throws, or "".
std::string refusal(const std::string& text) {
  try {
    BlockLength::parse(text);
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

// n daily issues from day 1000, each with one case at lead 1: the most likely
// state is right on the first 3 issues of every 7.
Cases daily_issues(int n, int lag_span_days) {
  Cases cases;
  for (int i = 0; i < n; ++i) {
    Case c;
    c.issue = i;
    c.issue_day = 1000 + i;
    c.lead = 1;
    c.valid = c.issue_day + 1;
    c.month = 1;
    c.most_likely = 0;
    c.observed = i % 7 < 3 ? 0 : 1;
    c.p = arma::vec{0.6, 0.3, 0.1};
    cases.list.push_back(c);
  }
  cases.lag_span_days = lag_span_days;
  return cases;
}

}  // namespace

TEST_CASE("verify intervals: the block length reads N days or auto and refuses anything else naming the flag") {
  CHECK(BlockLength::parse("12").days == 12);
  CHECK(!BlockLength::parse("12").automatic);
  CHECK(BlockLength::parse("auto").automatic);
  CHECK(BlockLength{}.to_string() == "lag+7");
  CHECK(BlockLength::parse("9").to_string() == "9");
  CHECK(BlockLength::parse("auto").to_string() == "auto");
  for (const std::string bad : {"0", "-3", "x", "", "7.5", "1234567", "Auto"}) {
    const std::string message = refusal(bad);
    CHECK_MESSAGE(message.find("--block-days") != std::string::npos, bad);
    CHECK_MESSAGE(message.find("'" + bad + "'") != std::string::npos, bad);
  }
  VerifyConfig c;
  c.guidance = {"archive"};
  c.block_length.days = -1;
  CHECK_THROWS_AS(c.validate(), InputError);
}

TEST_CASE("verify intervals: blocks of the lag span plus 7 days by default and the count beside the interval") {
  const Cases cases = daily_issues(40, 3);
  const StateClimatology climatology{{"R1", "R2", "no_regime"}, arma::vec{0.4, 0.4, 0.2}};
  std::vector<std::size_t> idx(cases.list.size());
  for (std::size_t i = 0; i < idx.size(); ++i) idx[i] = i;
  VerifyConfig config;
  config.bootstrap_resamples = 200;
  const auto hit = headline_interval(cases, idx, climatology, Headline::HitRate, config);
  CHECK(hit["block_days"] == 10);
  CHECK(hit["blocks"] == 4);
  CHECK(hit["estimate"].get<double>() == doctest::Approx(0.45));  // 18 of 40
  CHECK(hit["lower"].get<double>() < 0.45);
  CHECK(hit["upper"].get<double>() > 0.45);
  CHECK(!hit.contains("note"));
  config.block_length = BlockLength::parse("14");  // 40 / 14 = 2 blocks: no interval
  const auto none = headline_interval(cases, idx, climatology, Headline::HitRate, config);
  CHECK(none["block_days"] == 14);
  CHECK(none["blocks"] == 2);
  CHECK(none["lower"].is_null());
  CHECK(none["upper"].is_null());
  CHECK(none["estimate"].get<double>() == doctest::Approx(0.45));
  CHECK(none["note"].get<std::string>().find("fewer than 3") != std::string::npos);
  // auto: Wilks (1997) from the per-issue hit rate (runs of 3 hits and 4 misses: r1 > 0, blocks longer than 1 day).
  std::vector<std::int64_t> days;
  std::vector<double> rate;
  for (const Case& c : cases.list) {
    days.push_back(c.issue_day);
    rate.push_back(c.most_likely == c.observed ? 1.0 : 0.0);
  }
  const int wilks = wilks_block_days(days, rate);
  CHECK(wilks > 1);
  config.block_length = BlockLength::parse("auto");
  CHECK(headline_interval(cases, idx, climatology, Headline::HitRate, config)["block_days"] == wilks);
}

TEST_CASE("verify intervals: a hit rate near 1 gets an interval that ends at 1") {
  // 40 daily issues, the most likely state right on all but 2: hit rate 0.95, and with 4 blocks (t with 3
  // degrees of freedom) the symmetric interval would pass 1.
  Cases cases = daily_issues(40, 3);
  for (Case& c : cases.list) c.observed = c.issue == 5 || c.issue == 23 ? 1 : 0;
  const StateClimatology climatology{{"R1", "R2", "no_regime"}, arma::vec{0.4, 0.4, 0.2}};
  std::vector<std::size_t> idx(cases.list.size());
  for (std::size_t i = 0; i < idx.size(); ++i) idx[i] = i;
  VerifyConfig config;
  config.bootstrap_resamples = 300;
  const auto hit = headline_interval(cases, idx, climatology, Headline::HitRate, config);
  CHECK(hit["blocks"] == 4);
  CHECK(hit["estimate"].get<double>() == doctest::Approx(0.95));
  CHECK(hit["upper"].get<double>() == 1.0);
  CHECK(hit["lower"].get<double>() < 0.95);
  CHECK(hit["lower"].get<double>() >= 0.0);
}
