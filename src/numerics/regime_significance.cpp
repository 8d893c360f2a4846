#include "isohypse/numerics/regime_significance.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <memory>
#include <numeric>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/classifiability.hpp"
#include "isohypse/numerics/kmeans.hpp"
#include "base/parallel.hpp"
#include "base/random.hpp"

namespace isohypse {
namespace {

using arma::uword;

// numpy.quantile's default (linear interpolation between order statistics).
double quantile(std::vector<double> v, double q) {
  if (v.empty()) return arma::datum::nan;
  std::sort(v.begin(), v.end());
  const double pos = q * static_cast<double>(v.size() - 1);
  const auto lo = static_cast<std::size_t>(std::floor(pos));
  const std::size_t hi = std::min(lo + 1, v.size() - 1);
  return v[lo] + (pos - static_cast<double>(lo)) * (v[hi] - v[lo]);
}

// p <= level, allowing for the binary rounding of the levels: 1 - 0.9 is
// 0.09999999999999998, and a p-value of 5/100 must pass at 0.1 / 2.
bool at_most(double p, double level) { return p <= level * (1.0 + 1e-9); }

// What the runs on one data set at one k give.
struct SetResult {
  double index = 0.0, spread = 0.0, ratio = 0.0;
  int best = 0;
  arma::mat best_centroids;
};

// The sum of squares of the points about their mean, in double.
double total_sum_of_squares(const arma::fmat& points) {
  double total = 0.0;
  for (uword c = 0; c < points.n_cols; ++c) {
    const arma::vec x = arma::conv_to<arma::vec>::from(points.col(c));
    total += arma::accu(arma::square(x - arma::mean(x)));
  }
  return total;
}

// A data set in float, one day per row, as kmeans_quick takes them, with
// its total sum of squares.
struct DataSet {
  arma::fmat points;
  double total = 0.0;
};

DataSet data_set(const arma::mat& pcs) {
  DataSet d;
  d.points = arma::conv_to<arma::fmat>::from(pcs);
  d.total = total_sum_of_squares(d.points);
  return d;
}

// `runs` quick k-means runs at k on one data set (set 0 is the data, s >= 1
// the s-th surrogate): the classifiability of their partitions and the
// variance ratio of the one with the least inertia.
SetResult run_set(const DataSet& data, int k, std::uint64_t set, const RegimeCountOptions& opt,
                  QuickKMeans& state) {
  std::vector<arma::mat> centroid_sets(static_cast<std::size_t>(opt.runs));
  double least = arma::datum::inf;
  for (std::size_t run = 0; run < centroid_sets.size(); ++run) {
    QuickKMeansOptions ko;
    ko.k = k;
    ko.restarts = opt.restarts_per_run;
    ko.relative_inertia_change = kClassifiabilityInertiaChange;
    ko.seed = detail::derive_seed(opt.seed, {2, static_cast<std::uint64_t>(k), set, run});
    kmeans_quick(data.points, ko, state);
    centroid_sets[run] = state.centroids;
    least = std::min(least, state.inertia);
  }
  const ClassifiabilityResult c = classifiability(centroid_sets);
  SetResult r;
  r.index = c.index;
  r.spread = c.spread;
  r.best = c.best;
  r.ratio = least > 0.0 ? (data.total - least) / least : arma::datum::inf;
  if (set == 0) r.best_centroids = centroid_sets[static_cast<std::size_t>(c.best)];
  return r;
}

void check_options(const arma::mat& pcs, const std::vector<char>& consecutive, const RegimeCountOptions& opt) {
  const std::string who = "regime count (classifiability)";
  if (opt.k_min < 2 || opt.k_max < opt.k_min || static_cast<uword>(opt.k_max) > pcs.n_rows)
    throw InputError(who + ": needs 2 <= k_min <= k_max <= " + std::to_string(pcs.n_rows) +
                     " days, found k_min = " + std::to_string(opt.k_min) +
                     ", k_max = " + std::to_string(opt.k_max));
  if (opt.runs < 3 || opt.surrogates < 1 || opt.restarts_per_run < 1 || !(opt.level > 0.0 && opt.level < 1.0))
    throw InputError(who + ": needs runs >= 3, surrogates >= 1, restarts_per_run >= 1 and "
                     "0 < level < 1, found " + std::to_string(opt.runs) + ", " +
                     std::to_string(opt.surrogates) + ", " + std::to_string(opt.restarts_per_run) +
                     " and " + std::to_string(opt.level));
  if (consecutive.size() != pcs.n_rows)
    throw InternalError(who + ": " + std::to_string(pcs.n_rows) + " days but " +
                        std::to_string(consecutive.size()) + " consecutive-day flags");
}

// Surrogates at least as classifiable (within kIndexResolution) or at least
// as separated as the data, so far.
struct Exceedances {
  int index = 0, ratio = 0;
};

Exceedances count_exceedances(const RegimeCountRow& row) {
  Exceedances e;
  for (std::size_t s = 0; s < row.surrogate_index.size(); ++s) {
    e.index += row.surrogate_index[s] >= row.index - kIndexResolution ? 1 : 0;
    e.ratio += row.surrogate_ratio[s] >= row.variance_ratio ? 1 : 0;
  }
  return e;
}

// The p-values from the surrogates drawn; lower bounds when a k stopped early
// (the surrogates not drawn are counted as below the data).
void set_p_values(RegimeCountRow& row, int surrogates) {
  const Exceedances e = count_exceedances(row);
  const double denominator = 1.0 + surrogates;
  row.p_index = (1.0 + e.index) / denominator;
  row.p_ratio = (1.0 + e.ratio) / denominator;
  row.stopped_early = row.surrogates() < surrogates;
  // The gap on log(1 + R) = log(T / W): log W of the surrogates' mean minus
  // the data's, and its spread sd * sqrt(1 + 1/S) (sd with 1/S).
  const auto n = static_cast<double>(row.surrogate_ratio.size());
  if (n == 0) return;
  double mean = 0.0, square = 0.0;
  for (double r : row.surrogate_ratio) mean += std::log1p(r) / n;
  for (double r : row.surrogate_ratio) square += (std::log1p(r) - mean) * (std::log1p(r) - mean) / n;
  row.gap = std::log1p(row.variance_ratio) - mean;
  row.gap_spread = std::sqrt(square) * std::sqrt(1.0 + 1.0 / n);
}

// The progress of the whole table: units done and the units still planned.
class TableProgress {
public:
  TableProgress(const std::function<void(int, int)>& report, int planned) : report_(report), total_(planned) {}
  // Runs the units on the pool, reporting each.
  template <class Task>
  void run(std::size_t units, int threads, Task&& task) {
    std::function<void(std::size_t, std::size_t)> each;
    const int base = done_;
    if (report_)
      each = [&](std::size_t done, std::size_t) { report_(base + static_cast<int>(done), total_); };
    detail::parallel_for(units, threads, task, each);
    done_ = base + static_cast<int>(units);
  }
  void drop(int units) { total_ -= units; }

private:
  const std::function<void(int, int)>& report_;
  int total_ = 0, done_ = 0;
};

}  // namespace

int minimum_surrogates(int k_count, double level) {
  const double alpha = 1.0 - level;
  return std::max(1, static_cast<int>(std::ceil(static_cast<double>(k_count) / alpha - 1.0 - 1e-9)));
}

std::vector<RegimeCountRow> regime_count_table(const arma::mat& pcs,
                                               const std::vector<char>& consecutive,
                                               const RegimeCountOptions& opt,
                                               const std::function<void(int, int)>& progress) {
  check_options(pcs, consecutive, opt);
  const auto n_k = static_cast<std::size_t>(opt.k_max - opt.k_min + 1);
  const double alpha = 1.0 - opt.level;
  std::vector<RegimeCountRow> table(n_k);
  detail::StatePool<QuickKMeans> buffers([] { return std::make_unique<QuickKMeans>(); });
  TableProgress tracker(progress, static_cast<int>(n_k) * (opt.surrogates + 1));

  // The data first: every k's index and ratio, against which the surrogates count.
  const DataSet data = data_set(pcs);
  tracker.run(n_k, opt.threads, [&](std::size_t ki) {
    auto state = buffers.lease();
    const int k = opt.k_min + static_cast<int>(ki);
    const SetResult r = run_set(data, k, 0, opt, *state);
    RegimeCountRow& row = table[ki];
    row.k = k;
    row.index = r.index;
    row.index_spread = r.spread;
    row.best_run = r.best;
    row.best_centroids = r.best_centroids;
    row.variance_ratio = r.ratio;
  });

  // Then the surrogates, a batch at a time, for the k still open.
  std::vector<char> open(n_k, 1);
  for (int first = 1; first <= opt.surrogates; first += kSurrogateBatch) {
    const int last = std::min(opt.surrogates, first + kSurrogateBatch - 1);
    const auto batch = static_cast<std::size_t>(last - first + 1);
    std::vector<DataSet> sets(batch);
    detail::parallel_for(batch, opt.threads, [&](std::size_t b) {
      const auto s = static_cast<std::uint64_t>(first) + b;
      sets[b] = data_set(red_noise_surrogate(pcs, consecutive, detail::derive_seed(opt.seed, {1, s})));
    });
    std::vector<std::size_t> ks;
    for (std::size_t ki = 0; ki < n_k; ++ki)
      if (open[ki]) ks.push_back(ki);
    std::vector<SetResult> results(ks.size() * batch);
    tracker.run(results.size(), opt.threads, [&](std::size_t u) {
      auto state = buffers.lease();
      const std::size_t ki = ks[u / batch], b = u % batch;
      results[u] = run_set(sets[b], opt.k_min + static_cast<int>(ki), static_cast<std::uint64_t>(first) + b, opt,
                           *state);
    });
    for (std::size_t i = 0; i < ks.size(); ++i) {
      RegimeCountRow& row = table[ks[i]];
      for (std::size_t b = 0; b < batch; ++b) {
        row.surrogate_index.push_back(results[i * batch + b].index);
        row.surrogate_ratio.push_back(results[i * batch + b].ratio);
      }
      const Exceedances e = count_exceedances(row);
      const bool decided = !at_most((1.0 + std::max(e.index, e.ratio)) / (1.0 + opt.surrogates), alpha);
      if (opt.stop_early && decided && last < opt.surrogates) {
        open[ks[i]] = 0;
        tracker.drop(opt.surrogates - last);
      }
    }
  }
  for (auto& row : table) {
    set_p_values(row, opt.surrogates);
    row.surrogate_level = quantile(row.surrogate_index, opt.level);
  }
  apply_holm(table, opt.level);
  return table;
}

void apply_holm(std::vector<RegimeCountRow>& table, double level) {
  const double alpha = 1.0 - level;
  std::vector<std::size_t> order(table.size());
  std::iota(order.begin(), order.end(), 0);
  std::stable_sort(order.begin(), order.end(),
                   [&](std::size_t a, std::size_t b) { return table[a].p_ratio < table[b].p_ratio; });
  bool passing = true;
  const std::size_t m = table.size();
  for (std::size_t rank = 0; rank < m; ++rank) {
    RegimeCountRow& row = table[order[rank]];
    row.holm_level = alpha / static_cast<double>(m - rank);
    passing = passing && at_most(row.p_ratio, row.holm_level);
    row.significant = passing && at_most(row.p_index, alpha);
  }
}

namespace {

std::string fixed(double v, int digits) {
  char s[32];
  std::snprintf(s, sizeof s, "%.*f", digits, v);
  return s;
}

}  // namespace

RegimeCountChoice choose_regime_count(const std::vector<RegimeCountRow>& table) {
  const RegimeCountRow* top = nullptr;
  for (const auto& r : table)
    if (r.significant && (!top || r.index > top->index)) top = &r;
  RegimeCountChoice choice;
  if (!top) {
    choice.reason = "no k passes: for no k from " + std::to_string(table.front().k) + " to " +
                    std::to_string(table.back().k) +
                    " are the partitions both more separated (after Holm's correction) and more reproducible "
                    "than in red noise; no regime structure is significant";
    return choice;
  }
  // The k as reproducible as the top one, as far as the runs can tell, in
  // increasing k; among them the gap decides, ties within its spread to the
  // smaller k.
  const double tie = std::max(top->index_spread, kIndexTie);
  std::vector<const RegimeCountRow*> tied;
  for (const auto& r : table)
    if (r.significant && r.index >= top->index - tie) tied.push_back(&r);
  const RegimeCountRow* widest = tied.front();
  for (const auto* r : tied)
    if (r->gap > widest->gap) widest = r;
  const RegimeCountRow* chosen = widest;
  for (const auto* r : tied)
    if (r->k < chosen->k && r->gap >= widest->gap - widest->gap_spread) chosen = r;
  choice.k = chosen->k;
  choice.reason = "k = " + std::to_string(chosen->k) + ": ";
  if (tied.size() == 1) {
    choice.reason += "highest index among the significant, " + fixed(top->index, 3);
  } else {
    std::string names, gaps;
    for (const auto* r : tied) {
      names += (names.empty() ? "" : ", ") + std::to_string(r->k);
      gaps += (gaps.empty() ? "" : ", ") + std::to_string(r->k) + ": " + fixed(r->gap, 3);
    }
    choice.reason += "the significant k = " + names + " have indices within " + fixed(tie, 3) +
                     " of the highest (" + fixed(top->index, 3) + "), too close to rank; the gap over red noise "
                     "decides (" + gaps + ")";
    if (chosen != widest)
      choice.reason += ", and k = " + std::to_string(chosen->k) + " is within the spread (" +
                       fixed(widest->gap_spread, 3) + ") of the largest, so the smaller k is kept";
  }
  std::string others;
  for (const auto& r : table) {
    if (!r.significant || std::find(tied.begin(), tied.end(), &r) != tied.end()) continue;
    others += (others.empty() ? "" : ", ") + std::to_string(r.k) + " (" + fixed(r.index, 3) + ")";
  }
  if (!others.empty()) choice.reason += "; also significant, with lower indices: k = " + others;
  return choice;
}

}  // namespace isohypse
