#include "isohypse/numerics/ensemble_stats.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <limits>
#include <set>
#include <string>

#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

std::string describe(const MemberTrack& t, std::size_t index) {
  return "track " + std::to_string(index) + " (initialisation '" + t.initialisation + "', member " +
         std::to_string(t.member) + ")";
}

void check_tracks(const char* fn, const std::vector<MemberTrack>& tracks, int n_states) {
  if (n_states < 2)
    throw InternalError(std::string(fn) + ": n_states must be >= 2, found " + std::to_string(n_states));
  for (std::size_t m = 0; m < tracks.size(); ++m) {
    const MemberTrack& t = tracks[m];
    if (!std::isfinite(t.weight) || t.weight <= 0.0)
      throw InternalError(std::string(fn) + ": " + describe(t, m) + " has weight " + std::to_string(t.weight) +
                       "; expected a finite weight > 0");
    for (long long i = 0; i < static_cast<long long>(t.labels.size()); ++i)
      if (t.labels[i] < 0 || t.labels[i] >= n_states)
        throw InternalError(std::string(fn) + ": " + describe(t, m) + " has label " + std::to_string(t.labels[i]) +
                         " at day offset " + std::to_string(t.first_offset + i) + "; expected 0.." +
                         std::to_string(n_states - 1));
  }
}

void check_range(const char* fn, int first, int last) {
  if (first > last)
    throw InternalError(std::string(fn) + ": first day offset " + std::to_string(first) + " is after last " +
                     std::to_string(last));
}

// Indices [begin, end) of the track's labels whose valid day lies in
// [first, last]; begin >= end when the track misses the range. 64-bit so
// that extreme offsets cannot overflow.
struct Span {
  long long begin, end;
};
Span span_in(const MemberTrack& t, int first, int last) {
  const long long n = static_cast<long long>(t.labels.size());
  return {std::max(0LL, static_cast<long long>(first) - t.first_offset),
          std::min(n, static_cast<long long>(last) - t.first_offset + 1)};
}

// The covered part of [first, last]: [lo, hi], lo > hi when nothing is covered.
// Bounding the per-day buffers by it keeps a huge requested range cheap.
std::pair<long long, long long> covered_days(const std::vector<MemberTrack>& tracks, int first, int last) {
  long long lo = std::numeric_limits<long long>::max(), hi = std::numeric_limits<long long>::min();
  for (const MemberTrack& t : tracks) {
    const Span s = span_in(t, first, last);
    if (s.begin >= s.end) continue;
    lo = std::min(lo, t.first_offset + s.begin);
    hi = std::max(hi, t.first_offset + s.end - 1);
  }
  return {lo, hi};
}

// Whether a track's span in [first, last] holds at least kDominanceMinCoverage
// of the window's days. Why 0.8: the older initialisations of a daily lag stop
// a few days short of a long window's end (a 4-day lag misses at most 3 of the
// 17 days of 29-45, covering 82 %), and requiring every day let only the
// latest initialisation vote. A member missing the last fifth keeps its
// whole-window mode unless the runner-up state gains more than its lead in
// those days, and with regimes lasting about a week the missing days mostly
// continue the last covered ones; below four fifths a member sees too little
// of the window. Completeness thresholds of this kind are common practice for
// statistics of incomplete daily series; the value 0.8 is our choice. The
// 1e-9 keeps an exact four fifths (4 of 5 days) in despite rounding.
bool covers_enough(const Span& s, int first, int last) {
  const double window_days = static_cast<double>(last) - first + 1.0;
  return s.end > s.begin && static_cast<double>(s.end - s.begin) >= kDominanceMinCoverage * window_days - 1e-9;
}

// For each label, how many days its state has lasted, counted back to the
// track's first day (1 on the day it began).
std::vector<int> ages_back(const std::vector<int>& labels) {
  std::vector<int> age(labels.size(), 1);
  for (std::size_t i = 1; i < labels.size(); ++i)
    if (labels[i] == labels[i - 1]) age[i] = age[i - 1] + 1;
  return age;
}

// For each label, how many of the following days stay in its state.
std::vector<int> days_ahead(const std::vector<int>& labels) {
  std::vector<int> ahead(labels.size(), 0);
  for (std::size_t i = labels.size(); i-- > 1;)
    if (labels[i - 1] == labels[i]) ahead[i - 1] = ahead[i] + 1;
  return ahead;
}

arma::mat normalise_rows(const arma::mat& counts) {
  arma::mat p(counts.n_rows, counts.n_cols);
  for (arma::uword r = 0; r < counts.n_rows; ++r) {
    const double total = arma::accu(counts.row(r));
    if (total > 0.0)
      p.row(r) = counts.row(r) / total;
    else
      p.row(r).fill(kNaN);
  }
  return p;
}

}  // namespace

Weighting Weighting::parse(const std::string& text) {
  if (text == "equal") return {WeightScheme::Equal, 5.0};
  if (text == "linear") return {WeightScheme::Linear, 5.0};
  const std::string prefix = "exp:";
  if (text.rfind(prefix, 0) == 0) {
    const char* begin = text.data() + prefix.size();
    const char* end = text.data() + text.size();
    double days = 0.0;
    const auto [ptr, ec] = std::from_chars(begin, end, days);
    if (ec == std::errc() && ptr == end && std::isfinite(days) && days > 0.0)
      return {WeightScheme::Exponential, days};
  }
  throw InputError("lagged-ensemble weighting '" + text +
                   "' is not valid; expected 'equal', 'linear' or 'exp:DAYS' with DAYS > 0 (e.g. 'exp:3')");
}

std::string Weighting::to_string() const {
  switch (scheme) {
    case WeightScheme::Equal:
      return "equal";
    case WeightScheme::Linear:
      return "linear";
    case WeightScheme::Exponential: {
      char buf[64];
      const auto [ptr, ec] = std::to_chars(buf, buf + sizeof buf, timescale_days);  // shortest round-trip form
      return "exp:" + std::string(buf, ec == std::errc() ? ptr : buf);
    }
  }
  return "unknown";
}

std::vector<double> initialisation_weights(const std::vector<int>& ages_days, const Weighting& w) {
  for (std::size_t i = 0; i < ages_days.size(); ++i)
    if (ages_days[i] < 0)
      throw InternalError("initialisation_weights: age " + std::to_string(ages_days[i]) + " days at index " +
                       std::to_string(i) + "; expected >= 0");
  if (w.scheme == WeightScheme::Exponential && !(std::isfinite(w.timescale_days) && w.timescale_days > 0.0))
    throw InputError("initialisation_weights: exponential timescale " + std::to_string(w.timescale_days) +
                     " days; expected a finite value > 0");
  const int max_age = ages_days.empty() ? 0 : *std::max_element(ages_days.begin(), ages_days.end());
  std::vector<double> weights;
  weights.reserve(ages_days.size());
  for (const int age : ages_days) {
    switch (w.scheme) {
      case WeightScheme::Equal:
        weights.push_back(1.0);
        break;
      case WeightScheme::Linear:
        weights.push_back(1.0 - static_cast<double>(age) / (static_cast<double>(max_age) + 1.0));
        break;
      case WeightScheme::Exponential:
        weights.push_back(std::exp(-age / w.timescale_days));
        break;
    }
  }
  return weights;
}

std::vector<DayProbabilities> daily_probabilities(const std::vector<MemberTrack>& tracks, int n_states,
                                                  int first, int last) {
  check_tracks("daily_probabilities", tracks, n_states);
  check_range("daily_probabilities", first, last);
  const auto [lo, hi] = covered_days(tracks, first, last);
  if (lo > hi) return {};
  const auto n_days = static_cast<arma::uword>(hi - lo + 1);
  arma::mat weight_in(n_states, n_days, arma::fill::zeros);  // sum of weights per state and day
  std::vector<int> members(n_days, 0);
  for (const MemberTrack& t : tracks) {
    const Span s = span_in(t, first, last);
    for (long long i = s.begin; i < s.end; ++i) {
      const auto d = static_cast<arma::uword>(t.first_offset + i - lo);
      weight_in(t.labels[i], d) += t.weight;
      ++members[d];
    }
  }
  std::vector<DayProbabilities> out;
  for (arma::uword d = 0; d < n_days; ++d) {
    if (members[d] == 0) continue;
    DayProbabilities day;
    day.offset = static_cast<int>(lo + d);
    day.members = members[d];
    day.weight_sum = arma::accu(weight_in.col(d));
    day.probability = weight_in.col(d) / day.weight_sum;
    // Weighted sums of equal size may differ in the last bit with the
    // summation order; a tolerance keeps the lowest-index rule for ties.
    const double top = day.probability.max();
    for (int k = 0; k < n_states; ++k)
      if (day.probability[k] >= top - 1e-12) {
        day.most_likely = k;
        break;
      }
    out.push_back(std::move(day));
  }
  return out;
}

WindowSummary window_summary(const std::vector<MemberTrack>& tracks, int n_states, int first, int last) {
  check_tracks("window_summary", tracks, n_states);
  check_range("window_summary", first, last);
  WindowSummary w;
  w.first = first;
  w.last = last;
  w.expected_days.zeros(n_states);
  for (const DayProbabilities& day : daily_probabilities(tracks, n_states, first, last))
    w.expected_days += day.probability;

  w.dominance.zeros(n_states);
  w.transition_counts.zeros(n_states, n_states);
  std::set<std::string> initialisations;
  for (const MemberTrack& t : tracks) {
    const Span s = span_in(t, first, last);
    for (long long i = s.begin; i + 1 < s.end; ++i) w.transition_counts(t.labels[i], t.labels[i + 1]) += t.weight;
    if (!covers_enough(s, first, last)) continue;
    arma::uvec days_in(n_states, arma::fill::zeros);
    for (long long i = s.begin; i < s.end; ++i) ++days_in[t.labels[i]];
    const arma::uvec modes = arma::find(days_in == days_in.max());
    w.dominance.elem(modes) += t.weight / static_cast<double>(modes.n_elem);
    w.member_weight += t.weight;
    ++w.members;
    initialisations.insert(t.initialisation);
  }
  w.initialisations = static_cast<int>(initialisations.size());
  if (w.members > 0)
    w.dominance /= w.member_weight;
  else
    w.dominance.fill(kNaN);
  w.transition = normalise_rows(w.transition_counts);
  return w;
}

std::vector<AgeDistribution> current_age(const std::vector<MemberTrack>& tracks, int n_states, int first,
                                         int last, int max_age) {
  check_tracks("current_age", tracks, n_states);
  check_range("current_age", first, last);
  if (max_age < 1) throw InternalError("current_age: max_age " + std::to_string(max_age) + "; expected >= 1");
  const auto [lo, hi] = covered_days(tracks, first, last);
  if (lo > hi) return {};
  const auto n_days = static_cast<arma::uword>(hi - lo + 1);
  arma::mat weight_at_age(max_age, n_days, arma::fill::zeros);
  arma::vec weighted_age_sum(n_days, arma::fill::zeros);
  for (const MemberTrack& t : tracks) {
    const Span s = span_in(t, first, last);
    if (s.begin >= s.end) continue;
    const std::vector<int> age = ages_back(t.labels);
    for (long long i = s.begin; i < s.end; ++i) {
      const auto d = static_cast<arma::uword>(t.first_offset + i - lo);
      weight_at_age(std::min(age[i], max_age) - 1, d) += t.weight;
      weighted_age_sum[d] += t.weight * age[i];
    }
  }
  std::vector<AgeDistribution> out;
  for (arma::uword d = 0; d < n_days; ++d) {
    const double total = arma::accu(weight_at_age.col(d));
    if (total <= 0.0) continue;  // weights are > 0, so only uncovered days
    out.push_back({static_cast<int>(lo + d), weight_at_age.col(d) / total, weighted_age_sum[d] / total});
  }
  return out;
}

LastingProbability lasting_probability(const std::vector<MemberTrack>& tracks, int n_states,
                                       const std::vector<int>& horizons) {
  check_tracks("lasting_probability", tracks, n_states);
  if (horizons.empty()) throw InternalError("lasting_probability: no horizons given; expected at least one");
  for (const int n : horizons)
    if (n < 1) throw InternalError("lasting_probability: horizon " + std::to_string(n) + " days; expected >= 1");
  const arma::uword n_h = horizons.size();
  arma::mat lasted(n_states, n_h, arma::fill::zeros), weight(n_states, n_h, arma::fill::zeros);
  LastingProbability out{horizons, arma::mat(n_states, n_h), arma::mat(n_states, n_h, arma::fill::zeros)};
  // Only the spell under way at the issue date: pooling every lead would mix
  // spells that begin late in the forecast, where members have lost skill.
  for (const MemberTrack& t : tracks) {
    const long long i0 = -static_cast<long long>(t.first_offset), n_labels = static_cast<long long>(t.labels.size());
    if (i0 < 0 || i0 >= n_labels) continue;
    const std::vector<int> ahead = days_ahead(t.labels);
    const int k = t.labels[i0];
    for (arma::uword h = 0; h < n_h; ++h) {
      if (i0 + horizons[h] >= n_labels) continue;
      weight(k, h) += t.weight;
      out.cases(k, h) += 1.0;
      if (ahead[i0] >= horizons[h]) lasted(k, h) += t.weight;
    }
  }
  for (arma::uword i = 0; i < lasted.n_elem; ++i)
    out.probability[i] = weight[i] > 0.0 ? lasted[i] / weight[i] : kNaN;
  return out;
}

int current_run_length(const std::vector<int>& labels, const std::vector<char>& consecutive) {
  if (labels.size() != consecutive.size())
    throw InternalError("current_run_length: " + std::to_string(labels.size()) + " labels but " +
                     std::to_string(consecutive.size()) + " consecutive flags; expected equal lengths");
  for (std::size_t i = 0; i < labels.size(); ++i)
    if (labels[i] < -1)
      throw InternalError("current_run_length: label " + std::to_string(labels[i]) + " at day " + std::to_string(i) +
                       "; expected >= 0, or -1 for unknown");
  if (labels.empty() || labels.back() == -1) return 0;
  int run = 1;
  for (std::size_t t = labels.size() - 1; t > 0 && consecutive[t] && labels[t - 1] == labels[t]; --t) ++run;
  return run;
}

}  // namespace isohypse
