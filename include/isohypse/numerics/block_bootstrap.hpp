// Moving-block bootstrap over consecutive issue dates, and its block length.
//
// Daily issues of a lagged ensemble share most of their initialisations, so
// the scores of consecutive issues are autocorrelated and resampling single
// issues gives intervals that are too narrow. Blocks of consecutive calendar
// days of issues are resampled instead (Kuensch 1989, The jackknife and the
// bootstrap for general stationary observations, Ann. Statist. 17,
// 1217-1241); the block length can be estimated from the lag-1
// autocorrelation of a per-issue score (Wilks 1997, Resampling hypothesis
// tests for autocorrelated fields, J. Climate 10, 65-82). A season holds
// only some ten blocks, so the interval is Student's t with blocks - 1
// degrees of freedom on the bootstrap standard error, corrected for the
// block length (the batch-means interval: Schmeiser 1982, Oper. Res. 30,
// 556-568; Meketon & Schmeiser 1984, Proc. Winter Simulation Conf.,
// 226-230): at n = 90 daily issues it covers a nominal 90 % 84-89 % of the
// time, where the percentile interval of the resamples covered 70-80 %
// (tests/block_bootstrap_test.cpp).
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <limits>
#include <string>
#include <vector>

#include "isohypse/numerics/scores.hpp"

namespace isohypse {

// A Student-t interval from moving blocks, and the blocks it rests on.
struct BlockInterval {
  Interval interval;       // estimate on all cases; lower/upper NaN when no interval is given
  int block_days = 0;      // block length L in calendar days
  std::size_t blocks = 0;  // whole blocks in the period: floor(period days / L)
  std::string note;        // empty, or why no interval is given
};

// Fewer whole blocks than this in the period: no interval.
inline constexpr std::size_t kMinBootstrapBlocks = 3;

// The issues of one block: indices [begin, end) into the sorted issue days.
struct IssueRange {
  std::size_t begin = 0, end = 0;
};
// The moving blocks of L = block_days consecutive calendar days over issue
// days (day numbers, strictly increasing): for every start s = 0 .. D - L,
// D = last - first + 1, the range of the issues dated first + s ..
// first + s + L - 1. A block inside a gap of the issue dates is empty. No
// block when L > D or no issue day. Throws InputError for block_days < 1 or
// days that are not strictly increasing.
std::vector<IssueRange> moving_blocks(const std::vector<std::int64_t>& issue_days, int block_days);

// The values a statistic can take (a hit rate [0, 1], a skill score
// (-inf, 1]); an interval is clamped into them.
struct StatisticRange {
  double lowest = -std::numeric_limits<double>::infinity();
  double highest = std::numeric_limits<double>::infinity();
};

// Moving-block bootstrap interval. issue_day_of_case holds, per
// case, the day number (days since an epoch, any calendar with consecutive
// numbers) of the issue it belongs to; the cases of one issue always travel
// together. The period runs from the first to the last issue day (D days);
// a block is the L = block_days consecutive days [s, s + L - 1], for every
// start s in the period with s + L - 1 inside it (D - L + 1 starts), and
// brings every issue dated inside it, with all its cases (a gap in the issue
// dates simply leaves a block with fewer issues). Each resample draws starts
// uniformly with replacement and concatenates their issues (in date order
// within a block) until it holds as many issues as the data; the last block
// is cut short there (Kuensch 1989). statistic gets the 0-based case indices
// (a case drawn twice appears twice). estimate = statistic on all cases in
// their original order; lower and upper = estimate -+ t * s * sqrt(D / (D - L)),
// with s the standard deviation (n - 1 in the denominator) of the finite
// resampled statistics, t the (1 + level)/2 quantile of Student's t with
// blocks - 1 degrees of freedom, then clamped into range. The factor
// sqrt(D / (D - L)) undoes the shrinkage of the spread of block means about
// their own mean (for a mean score the variance becomes the overlapping
// batch means estimator); t allows for the few blocks. Simulated at
// n = 90 daily issues (1000 series), the nominal 90 % interval of a mean
// covers the truth 87-89 % of the time for lagged-ensemble overlaps (lag 3
// and 4, blocks of lag + 7 days), 84 % for AR(1) scores with r1 = 0.7 and
// 81-84 % with r1 = 0.8 (tests/block_bootstrap_test.cpp; numpy series in
// tests/python/test_block_bootstrap.py). lower = upper = NaN, without a
// note, when the estimate is not finite or fewer than 2 resamples are
// finite. With fewer than
// kMinBootstrapBlocks whole blocks (D / L, rounded down) no resample is
// drawn: lower = upper = NaN and note says why. Single-threaded and
// deterministic for a seed. Throws InputError for no case, block_days < 1,
// resamples < 1, level outside (0, 1) or range.lowest >= range.highest.
BlockInterval moving_block_bootstrap(
    const std::vector<std::int64_t>& issue_day_of_case, int block_days,
    const std::function<double(const std::vector<std::size_t>& case_indices)>& statistic, int resamples,
    double level, std::uint64_t seed, StatisticRange range = {});

// Lag-1 autocorrelation of a series: sum (x_t - m)(x_t+1 - m) / sum (x_t - m)^2
// with m the series mean. NaN for fewer than 3 values or a constant series.
double lag1_autocorrelation(const std::vector<double>& series);

// Block length in issues from the lag-1 autocorrelation r1 of n per-issue
// values (Wilks 1997, eq. as in METHODS.md section 6): the fixed point of
// L = (n - L + 1)^((2/3)(1 - n'/n)), n' = n (1 - r1) / (1 + r1), solved by
// bisection on [1, n] and rounded to the nearest integer. r1 <= 0 or
// NaN gives 1 (no autocorrelation to keep). Throws InputError for n < 1.
int wilks_block_length(std::size_t n, double r1);

// Block length in calendar days for moving_block_bootstrap from a per-issue
// score: issue_days are the distinct issue day numbers in increasing order,
// score_of_issue the score of each issue alone (non-finite values are left
// out of the autocorrelation). The Wilks length in issues is turned into
// days by the mean spacing of the issues, (last - first + 1) / n, and is at
// least 1. Throws InputError when the sizes differ, are 0, or the days are
// not strictly increasing.
int wilks_block_days(const std::vector<std::int64_t>& issue_days, const std::vector<double>& score_of_issue);

}  // namespace isohypse
