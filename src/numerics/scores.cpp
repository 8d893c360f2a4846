#include "isohypse/numerics/scores.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <numeric>
#include <random>
#include <string>

#include "isohypse/base/error.hpp"
#include "numerics/resampling.hpp"

namespace isohypse {
namespace {

using resampling::sorted_quantile;

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Every binary-event score starts here: equal non-zero sizes, p in [0, 1],
// o in {0, 1}.
void check_binary(const char* who, const arma::vec& p, const arma::vec& o) {
  if (p.n_elem != o.n_elem || p.n_elem == 0) {
    throw InternalError(std::string(who) + ": forecast probabilities and outcomes must have the same, non-zero length; found " +
                     std::to_string(p.n_elem) + " probabilities and " + std::to_string(o.n_elem) + " outcomes");
  }
  for (arma::uword i = 0; i < p.n_elem; ++i) {
    if (!(p[i] >= 0.0 && p[i] <= 1.0)) {
      throw InputError(std::string(who) + ": probability of case " + std::to_string(i) +
                       " must be in [0, 1]; found " + std::to_string(p[i]));
    }
    if (o[i] != 0.0 && o[i] != 1.0) {
      throw InputError(std::string(who) + ": outcome of case " + std::to_string(i) + " must be 0 or 1; found " +
                       std::to_string(o[i]));
    }
  }
}

void check_table(const char* who, const arma::umat& table) {
  if (table.n_rows != table.n_cols || table.n_rows == 0) {
    throw InternalError(std::string(who) + ": contingency table must be square and non-empty; found " +
                     std::to_string(table.n_rows) + " x " + std::to_string(table.n_cols));
  }
  if (arma::accu(table) == 0) {
    throw InternalError(std::string(who) + ": contingency table holds no case");
  }
}

// The five terms from a grouping of the cases (group_of[i] in 0 .. n_groups-1;
// empty groups are skipped). Two passes: the group means first, then the
// within-group sums about them, so WBV and WBC are sums of squares and
// products of small deviations, not differences of large sums, and the
// identity BS = REL - RES + UNC + WBV - WBC holds to rounding.
BrierParts parts_from_groups(const std::vector<std::size_t>& group_of, std::size_t n_groups, const arma::vec& p,
                             const arma::vec& o) {
  std::vector<double> n(n_groups, 0.0), pbar(n_groups, 0.0), obar(n_groups, 0.0);
  for (arma::uword i = 0; i < p.n_elem; ++i) {
    n[group_of[i]] += 1.0;
    pbar[group_of[i]] += p[i];
    obar[group_of[i]] += o[i];
  }
  BrierParts parts{};
  const double total = static_cast<double>(p.n_elem);
  parts.brier = brier_score(p, o);
  parts.base_rate = arma::mean(o);
  parts.uncertainty = parts.base_rate * (1.0 - parts.base_rate);
  double rel = 0.0, res = 0.0;
  for (std::size_t g = 0; g < n_groups; ++g) {
    if (n[g] == 0.0) continue;
    pbar[g] /= n[g];
    obar[g] /= n[g];
    rel += n[g] * (pbar[g] - obar[g]) * (pbar[g] - obar[g]);
    res += n[g] * (obar[g] - parts.base_rate) * (obar[g] - parts.base_rate);
  }
  double wbv = 0.0, wbc = 0.0;
  for (arma::uword i = 0; i < p.n_elem; ++i) {
    const double dp = p[i] - pbar[group_of[i]];
    wbv += dp * dp;
    wbc += 2.0 * (o[i] - obar[group_of[i]]) * dp;
  }
  parts.reliability = rel / total;
  parts.resolution = res / total;
  parts.within_bin_variance = wbv / total;
  parts.within_bin_covariance = wbc / total;
  return parts;
}

// Per-bin sums of a reliability diagram.
struct Group {
  double n = 0.0, sum_p = 0.0, sum_o = 0.0;
};

// Edges i / n_bins, correctly rounded, so a probability written as the same
// fraction (0.6 for 3/5) falls in the bin it starts; linspace's accumulated
// 3 * 0.2 = 0.6000000000000001 would put it one bin lower.
arma::vec fixed_width_edges(int n_bins) {
  arma::vec edges(static_cast<arma::uword>(n_bins) + 1);
  for (arma::uword b = 0; b < edges.n_elem; ++b) edges[b] = static_cast<double>(b) / n_bins;
  return edges;
}

void check_edges(const arma::vec& p, const arma::vec& bin_edges) {
  if (bin_edges.n_elem < 2 || !bin_edges.is_finite()) {
    throw InputError("brier_decomposition: bin_edges must hold at least 2 finite edges; found " +
                     std::to_string(bin_edges.n_elem));
  }
  for (arma::uword i = 1; i < bin_edges.n_elem; ++i) {
    if (!(bin_edges[i] > bin_edges[i - 1])) {
      throw InputError("brier_decomposition: bin_edges must be strictly increasing; edge " + std::to_string(i) +
                       " is " + std::to_string(bin_edges[i]) + " after " + std::to_string(bin_edges[i - 1]));
    }
  }
  if (p.min() < bin_edges.front() || p.max() > bin_edges.back()) {
    throw InputError("brier_decomposition: bin_edges [" + std::to_string(bin_edges.front()) + ", " +
                     std::to_string(bin_edges.back()) + "] must cover every probability; found range [" +
                     std::to_string(p.min()) + ", " + std::to_string(p.max()) + "]");
  }
}

// Index of the bin [e_i, e_i+1) holding x, the last bin closed; edges sorted.
std::size_t bin_of(double x, const arma::vec& edges) {
  const auto it = std::upper_bound(edges.begin(), edges.end(), x);
  const auto i = static_cast<std::size_t>(it - edges.begin());
  return std::min<std::size_t>(i == 0 ? 0 : i - 1, edges.n_elem - 2);
}

// Uniform double in [0, 1) from the top 53 bits: the same on every standard
// library, unlike std::uniform_real_distribution.
double unit_uniform(std::mt19937_64& rng) { return static_cast<double>(rng() >> 11) * 0x1.0p-53; }

}  // namespace

double brier_score(const arma::vec& p, const arma::vec& o) {
  check_binary("brier_score", p, o);
  return arma::mean(arma::square(p - o));
}

BrierParts brier_decomposition(const arma::vec& p, const arma::vec& o, const arma::vec& bin_edges) {
  check_binary("brier_decomposition", p, o);
  std::vector<std::size_t> group_of(p.n_elem);
  if (bin_edges.is_empty()) {
    std::map<double, std::size_t> by_value;
    for (arma::uword i = 0; i < p.n_elem; ++i) by_value.emplace(p[i], 0);
    std::size_t g = 0;
    for (auto& [value, index] : by_value) index = g++;
    for (arma::uword i = 0; i < p.n_elem; ++i) group_of[i] = by_value.at(p[i]);
    return parts_from_groups(group_of, by_value.size(), p, o);
  }
  check_edges(p, bin_edges);
  for (arma::uword i = 0; i < p.n_elem; ++i) group_of[i] = bin_of(p[i], bin_edges);
  return parts_from_groups(group_of, bin_edges.n_elem - 1, p, o);
}

BrierParts binned_brier_decomposition(const arma::vec& p, const arma::vec& o, int n_bins) {
  if (n_bins < 2)
    throw InputError("binned_brier_decomposition: n_bins must be at least 2; found " + std::to_string(n_bins));
  return brier_decomposition(p, o, fixed_width_edges(n_bins));
}

double skill_score(double score, double reference) {
  if (reference == 0.0) return kNaN;
  return 1.0 - score / reference;
}

double multicategory_brier(const arma::rowvec& p, int observed) {
  if (p.is_empty()) throw InternalError("multicategory_brier: the forecast has no category");
  if (observed < 0 || static_cast<arma::uword>(observed) >= p.n_elem) {
    throw InputError("multicategory_brier: observed category must be in 0 .. " + std::to_string(p.n_elem - 1) +
                     "; found " + std::to_string(observed));
  }
  double sum = 0.0;
  for (arma::uword k = 0; k < p.n_elem; ++k) {
    if (!(p[k] >= 0.0 && p[k] <= 1.0)) {
      throw InputError("multicategory_brier: probability of category " + std::to_string(k) +
                       " must be in [0, 1]; found " + std::to_string(p[k]));
    }
    const double d = p[k] - (static_cast<arma::uword>(observed) == k ? 1.0 : 0.0);
    sum += d * d;
  }
  return sum;
}

double mean_multicategory_brier(const arma::mat& p, const std::vector<int>& observed) {
  if (p.n_rows != observed.size() || observed.empty()) {
    throw InternalError("mean_multicategory_brier: forecast rows and observed labels must have the same, non-zero count; found " +
                     std::to_string(p.n_rows) + " rows and " + std::to_string(observed.size()) + " labels");
  }
  double sum = 0.0;
  for (arma::uword i = 0; i < p.n_rows; ++i) sum += multicategory_brier(arma::rowvec(p.row(i)), observed[i]);
  return sum / static_cast<double>(p.n_rows);
}

double roc_area(const arma::vec& p, const arma::vec& o) {
  check_binary("roc_area", p, o);
  const arma::uvec order = arma::stable_sort_index(p);
  const double events = arma::accu(o), non_events = static_cast<double>(o.n_elem) - events;
  if (events == 0.0 || non_events == 0.0) return kNaN;
  // Walk groups of tied probabilities upward. Twice the count of concordant
  // pairs stays an exact integer in double for any realistic N.
  double twice_wins = 0.0, non_events_below = 0.0;
  for (arma::uword start = 0; start < order.n_elem;) {
    arma::uword end = start;
    double group_events = 0.0, group_non_events = 0.0;
    while (end < order.n_elem && p[order[end]] == p[order[start]]) {
      (o[order[end]] == 1.0 ? group_events : group_non_events) += 1.0;
      ++end;
    }
    twice_wins += 2.0 * group_events * non_events_below + group_events * group_non_events;
    non_events_below += group_non_events;
    start = end;
  }
  return twice_wins / (2.0 * events * non_events);
}

std::vector<ReliabilityBin> reliability_diagram(const arma::vec& p, const arma::vec& o, int n_bins) {
  check_binary("reliability_diagram", p, o);
  if (n_bins < 1) throw InputError("reliability_diagram: n_bins must be at least 1; found " + std::to_string(n_bins));
  const arma::vec edges = fixed_width_edges(n_bins);
  std::vector<Group> groups(static_cast<std::size_t>(n_bins));
  for (arma::uword i = 0; i < p.n_elem; ++i) {
    Group& g = groups[bin_of(p[i], edges)];
    g.n += 1.0;
    g.sum_p += p[i];
    g.sum_o += o[i];
  }
  std::vector<ReliabilityBin> bins;
  bins.reserve(groups.size());
  for (std::size_t b = 0; b < groups.size(); ++b) {
    const Group& g = groups[b];
    bins.push_back({edges[b], edges[b + 1], g.n > 0 ? g.sum_p / g.n : kNaN, g.n > 0 ? g.sum_o / g.n : kNaN,
                    static_cast<std::size_t>(g.n), kNaN, kNaN});
  }
  return bins;
}

std::vector<ReliabilityBin> reliability_diagram_with_bars(const arma::vec& p, const arma::vec& o, int n_bins,
                                                          int resamples, double level, std::uint64_t seed) {
  std::vector<ReliabilityBin> bins = reliability_diagram(p, o, n_bins);
  if (resamples < 1)
    throw InputError("reliability_diagram_with_bars: resamples must be at least 1; found " + std::to_string(resamples));
  if (!(level > 0.0 && level < 1.0))
    throw InputError("reliability_diagram_with_bars: level must be in (0, 1); found " + std::to_string(level));
  const arma::vec edges = fixed_width_edges(n_bins);
  std::vector<std::vector<double>> p_in_bin(bins.size());
  for (arma::uword i = 0; i < p.n_elem; ++i) p_in_bin[bin_of(p[i], edges)].push_back(p[i]);
  std::mt19937_64 rng(seed);
  std::vector<double> freq(static_cast<std::size_t>(resamples));
  for (std::size_t b = 0; b < bins.size(); ++b) {
    const std::vector<double>& pb = p_in_bin[b];
    if (pb.empty()) continue;
    for (double& f : freq) {
      // A reliable forecast: each case happens with its own probability.
      std::size_t events = 0;
      for (double pj : pb) events += unit_uniform(rng) < pj;
      f = static_cast<double>(events) / static_cast<double>(pb.size());
    }
    std::sort(freq.begin(), freq.end());
    bins[b].bar_lower = sorted_quantile(freq, (1.0 - level) / 2.0);
    bins[b].bar_upper = sorted_quantile(freq, (1.0 + level) / 2.0);
  }
  return bins;
}

ReliabilityFloor reliable_reliability(const arma::vec& p, int n_bins, int resamples, double level,
                                      std::uint64_t seed, const std::vector<std::int64_t>& event) {
  if (p.is_empty()) throw InputError("reliable_reliability: no case");
  if (!event.empty() && event.size() != p.n_elem)
    throw InputError("reliable_reliability: " + std::to_string(event.size()) + " event keys for " +
                     std::to_string(p.n_elem) + " cases");
  if (n_bins < 2) throw InputError("reliable_reliability: at least 2 bins are needed; found " + std::to_string(n_bins));
  if (resamples < 0) throw InputError("reliable_reliability: resamples must be 0 or more");
  if (!(level > 0.0 && level < 1.0))
    throw InputError("reliable_reliability: level must be in (0, 1); found " + std::to_string(level));
  const arma::vec edges = fixed_width_edges(n_bins);
  const std::size_t nb = static_cast<std::size_t>(n_bins);
  // Each case's bin and its event's dense index (its own when no keys are given).
  std::vector<std::size_t> bin(p.n_elem), ev(p.n_elem);
  std::map<std::int64_t, std::size_t> dense;
  std::vector<double> n(nb, 0.0), sum_p(nb, 0.0);
  std::map<std::pair<std::size_t, std::size_t>, std::vector<double>> shared;  // (bin, event) -> p of its cases
  for (arma::uword i = 0; i < p.n_elem; ++i) {
    bin[i] = bin_of(p[i], edges);
    ev[i] = event.empty() ? i : dense.emplace(event[i], dense.size()).first->second;
    n[bin[i]] += 1.0;
    sum_p[bin[i]] += p[i];
    shared[{bin[i], ev[i]}].push_back(p[i]);
  }
  const std::size_t n_events = event.empty() ? p.n_elem : dense.size();
  std::vector<double> var(nb, 0.0);  // n_k^2 var(obar_k)
  for (const auto& [key, ps] : shared)
    for (double a : ps)
      for (double b : ps) var[key.first] += std::min(a, b) - a * b;
  const double total = static_cast<double>(p.n_elem);
  ReliabilityFloor f;
  for (std::size_t b = 0; b < nb; ++b)
    if (n[b] > 0) f.mean += var[b] / n[b] / total;
  if (resamples == 0) {
    f.upper = std::numeric_limits<double>::quiet_NaN();
    return f;
  }
  std::mt19937_64 rng(seed);
  std::vector<double> events(nb), u(n_events), rel(static_cast<std::size_t>(resamples));
  for (double& r : rel) {
    for (double& x : u) x = unit_uniform(rng);
    std::fill(events.begin(), events.end(), 0.0);
    for (arma::uword i = 0; i < p.n_elem; ++i) events[bin[i]] += u[ev[i]] < p[i];
    r = 0.0;
    for (std::size_t b = 0; b < nb; ++b)
      if (n[b] > 0) r += (sum_p[b] - events[b]) * (sum_p[b] - events[b]) / n[b];  // n_k (pbar_k - obar_k)^2
    r /= total;
  }
  std::sort(rel.begin(), rel.end());
  f.upper = sorted_quantile(rel, level);
  return f;
}

arma::umat contingency(const std::vector<int>& forecast, const std::vector<int>& observed, int K) {
  if (forecast.size() != observed.size() || forecast.empty()) {
    throw InternalError("contingency: forecast and observed labels must have the same, non-zero count; found " +
                     std::to_string(forecast.size()) + " forecasts and " + std::to_string(observed.size()) +
                     " observations");
  }
  if (K < 1) throw InputError("contingency: K must be at least 1; found " + std::to_string(K));
  arma::umat table(static_cast<arma::uword>(K), static_cast<arma::uword>(K), arma::fill::zeros);
  for (std::size_t i = 0; i < forecast.size(); ++i) {
    for (const auto& [what, label] : {std::pair{"forecast", forecast[i]}, std::pair{"observed", observed[i]}}) {
      if (label < 0 || label >= K) {
        throw InputError(std::string("contingency: ") + what + " label of case " + std::to_string(i) +
                         " must be in 0 .. " + std::to_string(K - 1) + "; found " + std::to_string(label));
      }
    }
    ++table(static_cast<arma::uword>(forecast[i]), static_cast<arma::uword>(observed[i]));
  }
  return table;
}

double proportion_correct(const arma::umat& table) {
  check_table("proportion_correct", table);
  return static_cast<double>(arma::accu(table.diag())) / static_cast<double>(arma::accu(table));
}

double heidke_skill(const arma::umat& table) {
  check_table("heidke_skill", table);
  const arma::mat t = arma::conv_to<arma::mat>::from(table);
  const double total = arma::accu(t);
  const double chance = arma::dot(arma::sum(t, 1), arma::sum(t, 0).t()) / (total * total);
  if (chance == 1.0) return kNaN;
  return (proportion_correct(table) - chance) / (1.0 - chance);
}

arma::vec frequency_bias(const arma::umat& table) {
  check_table("frequency_bias", table);
  const arma::mat t = arma::conv_to<arma::mat>::from(table);
  return arma::vec(arma::sum(t, 1)) / arma::vec(arma::sum(t, 0).t());
}

}  // namespace isohypse
