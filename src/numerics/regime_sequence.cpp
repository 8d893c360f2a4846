#include "isohypse/numerics/regime_sequence.hpp"

#include <algorithm>
#include <numeric>
#include <string>

#include "isohypse/base/error.hpp"

namespace isohypse {
namespace {

RunLengthStats summarise_runs(std::vector<int> runs, int min_episode) {
  RunLengthStats s;
  s.runs = runs;
  if (runs.empty()) return s;
  s.mean = std::accumulate(runs.begin(), runs.end(), 0.0) / static_cast<double>(runs.size());
  std::sort(runs.begin(), runs.end());
  const std::size_t m = runs.size() / 2;
  s.median = runs.size() % 2 ? runs[m] : 0.5 * (runs[m - 1] + runs[m]);
  s.longest = runs.back();
  s.episodes = static_cast<int>(
      std::count_if(runs.begin(), runs.end(), [&](int r) { return r >= min_episode; }));
  return s;
}

}  // namespace

SequenceStats sequence_stats(const std::vector<int>& labels, const std::vector<char>& consecutive,
                             int n_states, int min_episode) {
  if (labels.size() != consecutive.size())
    throw InternalError("regime sequence: " + std::to_string(labels.size()) + " labels but " +
                     std::to_string(consecutive.size()) + " consecutive-day flags");
  if (n_states < 1 || min_episode < 1)
    throw InputError("regime sequence: n_states and min_episode must be >= 1, found " +
                     std::to_string(n_states) + " and " + std::to_string(min_episode));
  for (std::size_t t = 0; t < labels.size(); ++t)
    if (labels[t] >= n_states)
      throw InternalError("regime sequence: day " + std::to_string(t) + " has label " +
                       std::to_string(labels[t]) + " but there are only " +
                       std::to_string(n_states) + " states (0.." + std::to_string(n_states - 1) +
                       ")");

  const auto n = static_cast<arma::uword>(n_states);
  SequenceStats s;
  s.n_states = n_states;
  s.counts.zeros(n, n);
  arma::vec days(n, arma::fill::zeros);
  std::vector<std::vector<int>> runs(n);
  int run_length = 0;
  for (std::size_t t = 0; t < labels.size(); ++t) {
    const int l = labels[t];
    const bool linked = t > 0 && consecutive[t] && labels[t - 1] >= 0 && l >= 0;
    if (linked) ++s.counts(labels[t - 1], l);
    // Close the previous run unless this day continues it.
    if (run_length > 0 && !(linked && labels[t - 1] == l)) {
      runs[labels[t - 1]].push_back(run_length);
      run_length = 0;
    }
    if (l >= 0) {
      days[l] += 1.0;
      ++run_length;
    }
  }
  if (run_length > 0) runs[labels.back()].push_back(run_length);

  const double labelled = arma::accu(days);
  s.frequency = labelled > 0 ? arma::vec(days / labelled) : arma::vec(n, arma::fill::zeros);
  s.transition.set_size(n, n);
  s.residence_days.set_size(n);
  for (arma::uword i = 0; i < n; ++i) {
    const double row = static_cast<double>(arma::accu(s.counts.row(i)));
    s.transition.row(i) = row > 0 ? arma::rowvec(arma::conv_to<arma::rowvec>::from(s.counts.row(i)) / row)
                                  : arma::rowvec(n, arma::fill::value(arma::datum::nan));
    const double stay = s.transition(i, i);
    s.residence_days[i] = stay == 1.0 ? arma::datum::inf : 1.0 / (1.0 - stay);  // NaN stays NaN
  }
  for (const auto& r : runs) s.runs.push_back(summarise_runs(r, min_episode));
  return s;
}

}  // namespace isohypse
