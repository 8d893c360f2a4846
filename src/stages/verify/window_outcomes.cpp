#include "stages/verify/window_outcomes.hpp"

#include <string>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse::verification {

namespace {

void check_state(int s, std::size_t n_states, const char* who) {
  if (s < 0 || static_cast<std::size_t>(s) >= n_states)
    throw InternalError(std::string(who) + ": state " + std::to_string(s) + " outside 0.." +
                        std::to_string(n_states - 1));
}

}  // namespace

WindowOutcome observed_window(const std::vector<int>& labels, std::size_t n_states) {
  if (labels.empty()) throw InternalError("observed_window: a window without days");
  WindowOutcome out;
  out.days.zeros(n_states);
  for (int s : labels) {
    check_state(s, n_states, "observed_window");
    out.days(s) += 1;
  }
  const arma::uvec modes = arma::find(out.days == out.days.max());
  out.dominant = modes.n_elem == 1 ? static_cast<int>(modes(0)) : kTiedWindow;
  return out;
}

arma::vec climatological_dominance(const std::vector<std::int64_t>& day_numbers, const std::vector<int>& states,
                                   const std::vector<char>& in_season, std::size_t n_states, int window_days) {
  if (states.size() != day_numbers.size() || in_season.size() != day_numbers.size())
    throw InternalError("climatological_dominance: " + std::to_string(day_numbers.size()) + " days, " +
                        std::to_string(states.size()) + " states, " + std::to_string(in_season.size()) +
                        " season flags");
  if (window_days < 1) throw InternalError("climatological_dominance: a window of " + std::to_string(window_days) +
                                           " days");
  for (int s : states) check_state(s, n_states, "climatological_dominance");
  arma::vec dominance(n_states, arma::fill::zeros);
  double runs = 0;
  // run = consecutive in-season days ending at t; a window ends at every t
  // whose run is at least window_days long.
  std::size_t run = 0;
  const auto D = static_cast<std::size_t>(window_days);
  for (std::size_t t = 0; t < states.size(); ++t) {
    const bool follows = t > 0 && in_season[t - 1] && day_numbers[t] == day_numbers[t - 1] + 1;
    run = !in_season[t] ? 0 : follows ? run + 1 : 1;
    if (run < D) continue;
    arma::vec days(n_states, arma::fill::zeros);
    for (std::size_t i = t + 1 - D; i <= t; ++i) days(states[i]) += 1;
    const arma::uvec modes = arma::find(days == days.max());
    dominance.elem(modes) += 1.0 / static_cast<double>(modes.n_elem);
    runs += 1;
  }
  if (runs == 0) return arma::vec(n_states).fill(arma::datum::nan);
  return dominance / runs;
}

arma::vec climatological_dominance(const RegimeModel& model, int window_days) {
  std::vector<std::int64_t> days;
  std::vector<int> states;
  for (const Date& d : model.dates) days.push_back(day_number(d));
  for (int label : model.labels) states.push_back(label < 0 ? model.k() : label);
  return climatological_dominance(days, states, model.in_season, static_cast<std::size_t>(model.k()) + 1,
                                  window_days);
}

}  // namespace isohypse::verification
