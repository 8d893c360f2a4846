#include "stages/classify/window_statistics.hpp"

#include <algorithm>
#include <string>

#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

int last_day_reached(const std::vector<MemberTrack>& tracks) {
  int last = 0;
  for (const auto& t : tracks) last = std::max(last, t.first_offset + static_cast<int>(t.labels.size()) - 1);
  return last;
}

}  // namespace

WindowStatistics window_statistics(const RegimeModel& model, const ClassifyConfig& cfg,
                                   const std::vector<MemberTrack>& tracks) {
  WindowStatistics s;
  s.n_states = model.k() + 1;
  if (model.transition.n_rows != static_cast<arma::uword>(s.n_states) ||
      model.transition.n_cols != static_cast<arma::uword>(s.n_states))
    throw InternalError("window_statistics: the model's transition matrix is " +
                        std::to_string(model.transition.n_rows) + " x " + std::to_string(model.transition.n_cols) +
                        " for " + std::to_string(s.n_states) + " states");
  s.last_offset = last_day_reached(tracks);
  s.daily = daily_probabilities(tracks, s.n_states, 0, s.last_offset);
  for (const auto& [first, last] : cfg.windows)
    if (first <= s.last_offset)
      s.windows.push_back(window_summary(tracks, s.n_states, first, std::min(last, s.last_offset)));
  s.current_age = current_age(tracks, s.n_states, 0, s.last_offset);
  s.lasting = lasting_probability(tracks, s.n_states, {3, 5, 7});
  return s;
}

}  // namespace isohypse
