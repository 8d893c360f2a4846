// Moving-block bootstrap over consecutive issue dates (Kuensch 1989, Ann.
// Statist. 17, 1217-1241) and the block length of Wilks (1997, J. Climate
// 10, 65-82): the blocks, the resampler's contract, and the coverage of its
// nominal 90 % interval on simulated autocorrelated scores.
#include <doctest/doctest.h>

#include <cmath>
#include <cstdio>
#include <numeric>
#include <random>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/block_bootstrap.hpp"

using namespace isohypse;

namespace {

std::vector<std::int64_t> days_from(std::int64_t first, std::int64_t last) {
  std::vector<std::int64_t> days(static_cast<std::size_t>(last - first + 1));
  std::iota(days.begin(), days.end(), first);
  return days;
}

double mean_of(const std::vector<double>& values, const std::vector<std::size_t>& cases) {
  double sum = 0.0;
  for (std::size_t i : cases) sum += values[i];
  return sum / static_cast<double>(cases.size());
}

// n values of an AR(1) series x_t = mean + r1 (x_t-1 - mean) + e_t, started
// in its stationary distribution (unit variance).
std::vector<double> ar1_series(std::mt19937_64& rng, std::size_t n, double mean, double r1) {
  std::normal_distribution<double> normal(0.0, 1.0);
  std::vector<double> x(n);
  double anomaly = normal(rng);
  for (std::size_t t = 0; t < n; ++t) {
    x[t] = mean + anomaly;
    anomaly = r1 * anomaly + std::sqrt(1 - r1 * r1) * normal(rng);
  }
  return x;
}

// n issues whose scores share initialisations: the mean of `lag`
// consecutive independent initialisation scores (daily issues of a lagged
// ensemble of `lag` runs share lag - 1 of them; r1 = (lag - 1) / lag).
std::vector<double> overlapping_series(std::mt19937_64& rng, std::size_t n, double mean, int lag) {
  std::normal_distribution<double> normal(0.0, 1.0);
  std::vector<double> init(n + static_cast<std::size_t>(lag) - 1), x(n, mean);
  for (double& e : init) e = normal(rng);
  for (std::size_t t = 0; t < n; ++t)
    for (int j = 0; j < lag; ++j) x[t] += init[t + static_cast<std::size_t>(j)] / lag;
  return x;
}

// Fraction of `simulations` series of n = 90 daily issues (series(rng)
// makes one, true mean 0.4) whose nominal 90 % interval of the mean covers
// the true mean, with blocks of block_days (0: the Wilks length of each
// series). 500 resamples per interval.
template <class Series>
double coverage(Series series, int block_days, int simulations, std::uint64_t seed) {
  const double truth = 0.4;
  std::mt19937_64 rng(seed);
  const std::vector<std::int64_t> days = days_from(0, 89);
  int covered = 0;
  for (int m = 0; m < simulations; ++m) {
    const std::vector<double> x = series(rng, truth);
    const int length = block_days > 0 ? block_days : wilks_block_days(days, x);
    const auto mean = [&x](const std::vector<std::size_t>& cases) { return mean_of(x, cases); };
    const BlockInterval ci = moving_block_bootstrap(days, length, mean, 500, 0.9, 1000 + static_cast<std::uint64_t>(m));
    covered += ci.interval.lower <= truth && truth <= ci.interval.upper;
  }
  return static_cast<double>(covered) / simulations;
}

}  // namespace

TEST_CASE("block bootstrap: blocks are consecutive calendar days and a gap leaves them short") {
  // Daily issues on days 100..109 and 115..119 (a gap of 5 days), blocks of 3 days.
  std::vector<std::int64_t> days = days_from(100, 109);
  for (std::int64_t d = 115; d <= 119; ++d) days.push_back(d);
  const std::vector<IssueRange> blocks = moving_blocks(days, 3);
  REQUIRE(blocks.size() == 18);  // starts 100 .. 117
  for (std::size_t s = 0; s < blocks.size(); ++s) {
    const std::int64_t first = 100 + static_cast<std::int64_t>(s);
    std::size_t expected = 0;
    for (std::size_t i = 0; i < days.size(); ++i) {
      const bool inside = days[i] >= first && days[i] <= first + 2;
      if (inside) ++expected;
      if (i >= blocks[s].begin && i < blocks[s].end) CHECK(inside);
    }
    CHECK(blocks[s].end - blocks[s].begin == expected);
  }
  CHECK(blocks[8].end - blocks[8].begin == 2);   // days 108-110: 108, 109
  CHECK(blocks[10].begin == blocks[10].end);      // days 110-112: inside the gap
  CHECK(blocks[13].end - blocks[13].begin == 1);  // days 113-115: 115
  CHECK(moving_blocks(days, 21).empty());         // longer than the 20-day period
  CHECK_THROWS_AS(moving_blocks(days, 0), InputError);
  CHECK_THROWS_AS(moving_blocks({3, 2}, 2), InputError);
}

TEST_CASE("block bootstrap: a resample is whole blocks of consecutive issues with all their cases") {
  // 30 daily issues with two cases each (cases 2i and 2i + 1 belong to day i).
  std::vector<std::int64_t> issue_of_case;
  for (std::int64_t d = 0; d < 30; ++d) issue_of_case.insert(issue_of_case.end(), {d, d});
  std::vector<std::vector<std::size_t>> resamples;
  const auto record = [&resamples](const std::vector<std::size_t>& cases) {
    resamples.push_back(cases);
    return 1.0;
  };
  const BlockInterval ci = moving_block_bootstrap(issue_of_case, 3, record, 200, 0.9, 7);
  CHECK(ci.block_days == 3);
  CHECK(ci.blocks == 10);
  CHECK(ci.note.empty());
  REQUIRE(resamples.size() == 201);  // the estimate, then the resamples
  std::vector<int> starts(30, 0);
  for (std::size_t r = 1; r < resamples.size(); ++r) {
    const std::vector<std::size_t>& cases = resamples[r];
    REQUIRE(cases.size() == 60);  // as many issues as the data
    for (std::size_t k = 0; k < 60; k += 6) {  // ten blocks of three issues
      const std::size_t day = cases[k] / 2;
      ++starts[day];
      for (std::size_t j = 0; j < 6; ++j) CHECK(cases[k + j] == 2 * (day + j / 2) + j % 2);
    }
  }
  // Every start 0 .. 27 is drawn, none after (a block stays inside the period).
  for (std::size_t s = 0; s < 30; ++s) CHECK((starts[s] > 0) == (s <= 27));
}

TEST_CASE("block bootstrap: deterministic for a seed") {
  std::mt19937_64 rng(11);
  const std::vector<double> x = ar1_series(rng, 60, 0.0, 0.5);
  const std::vector<std::int64_t> days = days_from(0, 59);
  const auto mean = [&x](const std::vector<std::size_t>& cases) { return mean_of(x, cases); };
  const BlockInterval a = moving_block_bootstrap(days, 8, mean, 300, 0.9, 42);
  const BlockInterval b = moving_block_bootstrap(days, 8, mean, 300, 0.9, 42);
  const BlockInterval c = moving_block_bootstrap(days, 8, mean, 300, 0.9, 43);
  CHECK(a.interval.lower == b.interval.lower);
  CHECK(a.interval.upper == b.interval.upper);
  CHECK(a.interval.lower != c.interval.lower);
  CHECK(a.interval.finite_resamples == 300);
  std::vector<std::size_t> all(60);
  std::iota(all.begin(), all.end(), std::size_t{0});
  CHECK(a.interval.estimate == mean_of(x, all));
  CHECK(a.interval.lower < a.interval.estimate);
  CHECK(a.interval.estimate < a.interval.upper);
}

TEST_CASE("block bootstrap: fewer than three blocks in the period give no interval and say why") {
  const std::vector<std::int64_t> days = days_from(0, 19);  // 20 days
  int calls = 0;
  const auto count = [&calls](const std::vector<std::size_t>& cases) {
    ++calls;
    return static_cast<double>(cases.size());
  };
  const BlockInterval none = moving_block_bootstrap(days, 7, count, 100, 0.9, 1);  // 20 / 7 = 2 blocks
  CHECK(none.blocks == 2);
  CHECK(std::isnan(none.interval.lower));
  CHECK(std::isnan(none.interval.upper));
  CHECK(none.interval.estimate == 20.0);
  CHECK(calls == 1);  // the estimate only
  CHECK(none.note.find("fewer than 3") != std::string::npos);
  const BlockInterval three = moving_block_bootstrap(days, 6, count, 100, 0.9, 1);  // 3 blocks
  CHECK(three.blocks == 3);
  CHECK(three.note.empty());
  CHECK(three.interval.lower == 20.0);
  CHECK_THROWS_AS(moving_block_bootstrap({}, 3, count, 100, 0.9, 1), InputError);
  CHECK_THROWS_AS(moving_block_bootstrap(days, 0, count, 100, 0.9, 1), InputError);
  CHECK_THROWS_AS(moving_block_bootstrap(days, 3, count, 0, 0.9, 1), InputError);
  CHECK_THROWS_AS(moving_block_bootstrap(days, 3, count, 100, 1.0, 1), InputError);
}

TEST_CASE("block bootstrap: Wilks block length from the lag-1 autocorrelation") {
  // Fixed point of L = (n - L + 1)^((2/3)(1 - n'/n)), n' = n (1 - r1)/(1 + r1):
  // n = 90, r1 = 0.7 -> L = 11.08 (11); r1 = 0.8 -> 13.20 (13); no autocorrelation -> 1.
  CHECK(wilks_block_length(90, 0.7) == 11);
  CHECK(wilks_block_length(90, 0.8) == 13);
  CHECK(wilks_block_length(90, 0.0) == 1);
  CHECK(wilks_block_length(90, -0.3) == 1);
  CHECK(wilks_block_length(90, NAN) == 1);
  CHECK_THROWS_AS(wilks_block_length(0, 0.5), InputError);
  CHECK(lag1_autocorrelation({1, 2, 3, 4}) == doctest::Approx(0.25));  // 1.25 / 5
  CHECK(std::isnan(lag1_autocorrelation({2, 2, 2})));
  // Issues every second day: the length in issues doubles in days.
  const std::vector<double> score = {1, 1, 1, 0, 0, 0, 1, 1, 1, 0, 0, 0, 1, 1, 1, 0, 0, 0};
  std::vector<std::int64_t> every_day = days_from(0, 17), every_second;
  for (auto d : every_day) every_second.push_back(2 * d);
  const int in_days = wilks_block_days(every_day, score);
  CHECK(in_days == wilks_block_length(18, lag1_autocorrelation(score)));
  CHECK(wilks_block_days(every_second, score) == std::lround(in_days * 35.0 / 18.0));
  CHECK_THROWS_AS(wilks_block_days(every_day, {1.0}), InputError);
}

// Coverage of the nominal 90 % interval of a mean score, 400 simulations of
// n = 90 daily issues each (seeds fixed). What is asserted is what the
// percentile moving-block bootstrap delivers at n = 90, measured here:
// - issues overlapping as in a lagged ensemble (lag 3 and 4, r1 0.64-0.72):
//   single-issue blocks (the old resampling) cover 0.57-0.61; blocks of
//   lag + 7 days cover 0.78-0.79;
// - AR(1) scores, r1 = 0.7 and 0.8: single issues 0.39-0.50 (the issue
//   measured 48-71 %), blocks of lag 3 + 7 = 10 days and Wilks blocks
//   0.70-0.76.
// The 85-95 % the issue asks for is NOT reached: with n = 90 and 10-day
// blocks the resample is built from about 9 independent blocks, whose
// spread understates the sampling spread (like a normal quantile used where
// Student's t with 8 degrees of freedom applies, 1.64 against 1.86), and for
// AR(1) the blocks cut off the correlation beyond their length (the
// bootstrap variance of the mean weights lag k by 1 - k/L: 73 % of the true
// variance for r1 = 0.7, L = 10). The checks keep what holds: moving blocks
// widen the interval to cover far more often than single issues, without
// exceeding the nominal level.
TEST_CASE("block bootstrap: coverage of the nominal 90 percent interval on overlapping and AR(1) scores") {
  const int simulations = 400;
  for (int lag : {3, 4}) {
    const auto series = [lag](std::mt19937_64& rng, double mean) { return overlapping_series(rng, 90, mean, lag); };
    const double single = coverage(series, 1, simulations, 2030 + static_cast<std::uint64_t>(lag));
    const double blocks = coverage(series, lag + 7, simulations, 2030 + static_cast<std::uint64_t>(lag));
    std::printf("coverage of the nominal 90%% interval, issues overlapping with lag %d, %d simulations: "
                "single issues %.3f, blocks of %d days (lag + 7) %.3f\n",
                lag, simulations, single, lag + 7, blocks);
    CHECK(single < 0.7);
    CHECK(blocks >= 0.74);
    CHECK(blocks <= 0.95);
    CHECK(blocks - single >= 0.15);
  }
  for (const auto& [r1, seed] : {std::pair{0.7, std::uint64_t{2024}}, std::pair{0.8, std::uint64_t{2025}}}) {
    const auto series = [r1 = r1](std::mt19937_64& rng, double mean) { return ar1_series(rng, 90, mean, r1); };
    const double single = coverage(series, 1, simulations, seed);
    const double lag_plus_7 = coverage(series, 3 + 7, simulations, seed);
    const double wilks = coverage(series, 0, simulations, seed);
    std::printf("coverage of the nominal 90%% interval, AR(1) r1 = %.1f, %d simulations: single issues %.3f, "
                "blocks of 10 days (lag 3 + 7) %.3f, Wilks blocks %.3f\n",
                r1, simulations, single, lag_plus_7, wilks);
    CHECK(single < 0.6);
    for (double c : {lag_plus_7, wilks}) {
      CHECK(c >= 0.65);
      CHECK(c <= 0.95);
      CHECK(c - single >= 0.2);
    }
  }
}
