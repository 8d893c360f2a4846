#include "isohypse/numerics/state_frequencies.hpp"

#include <algorithm>
#include <string>
#include <vector>

#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

void check_record(const RegimeModel& model) {
  if (model.dates.size() != model.labels.size() || model.in_season.size() != model.labels.size())
    throw DataError(model.path + ": the record holds " + std::to_string(model.dates.size()) + " dates, " +
                    std::to_string(model.labels.size()) + " labels and " + std::to_string(model.in_season.size()) +
                    " season flags");
  for (int l : model.labels)
    if (l < -1 || l >= model.k())
      throw DataError(model.path + ": a record label " + std::to_string(l) + " outside -1.." +
                      std::to_string(model.k() - 1));
}

int state_of(const RegimeModel& model, std::size_t t) { return model.labels[t] < 0 ? model.k() : model.labels[t]; }

// Counts runs of D consecutive in-season days; `keep(middle day index)` chooses the runs.
template <class Keep>
WindowClimatology count_runs(const RegimeModel& model, int window_days, Keep keep) {
  const arma::uword S = static_cast<arma::uword>(model.k()) + 1;
  WindowClimatology w;
  w.dominance.zeros(S);
  w.expected_days.zeros(S);
  const auto D = static_cast<std::size_t>(window_days);
  std::size_t run = 0;
  for (std::size_t t = 0; t < model.labels.size(); ++t) {
    const bool follows = t > 0 && model.in_season[t - 1] && day_number(model.dates[t]) ==
                                                                  day_number(model.dates[t - 1]) + 1;
    run = !model.in_season[t] ? 0 : follows ? run + 1 : 1;
    if (run < D || !keep(t + 1 - D + (D - 1) / 2)) continue;
    arma::vec days(S, arma::fill::zeros);
    for (std::size_t i = t + 1 - D; i <= t; ++i) days(static_cast<arma::uword>(state_of(model, i))) += 1;
    const arma::uvec modes = arma::find(days == days.max());
    w.dominance.elem(modes) += 1.0 / static_cast<double>(modes.n_elem);
    w.expected_days += days;
    ++w.runs;
  }
  if (w.runs == 0) {
    w.dominance.fill(arma::datum::nan);
    w.expected_days.fill(arma::datum::nan);
    return w;
  }
  w.dominance /= static_cast<double>(w.runs);
  w.expected_days /= static_cast<double>(w.runs);
  return w;
}

}  // namespace

const arma::vec& MonthlyStateFrequencies::of(int month) const {
  if (month < 1 || month > 12) throw InternalError("MonthlyStateFrequencies::of: month " + std::to_string(month));
  return frequency[static_cast<std::size_t>(month - 1)];
}

MonthlyStateFrequencies monthly_state_frequencies(const RegimeModel& model) {
  check_record(model);
  const arma::uword S = static_cast<arma::uword>(model.k()) + 1;
  MonthlyStateFrequencies f;
  for (int m : model.months)
    if (m >= 1 && m <= 12) f.in_season[static_cast<std::size_t>(m - 1)] = true;
  arma::mat counts(S, 12, arma::fill::zeros);
  for (std::size_t t = 0; t < model.labels.size(); ++t) {
    const auto m = static_cast<std::size_t>(model.dates[t].month - 1);
    if (f.in_season[m] && !model.in_season[t]) continue;  // a season month: its in-season days only
    counts(static_cast<arma::uword>(state_of(model, t)), m) += 1;
    ++f.days[m];
  }
  for (std::size_t m = 0; m < 12; ++m)
    f.frequency[m] = f.days[m] > 0 ? arma::vec(counts.col(m) / static_cast<double>(f.days[m]))
                                   : arma::vec(S, arma::fill::value(arma::datum::nan));
  return f;
}

WindowClimatology window_climatology(const RegimeModel& model, int window_days, int month) {
  if (window_days < 1 || month < 1 || month > 12)
    throw InternalError("window_climatology: a window of " + std::to_string(window_days) + " days in month " +
                        std::to_string(month));
  check_record(model);
  WindowClimatology w = count_runs(model, window_days, [&](std::size_t mid) { return model.dates[mid].month == month; });
  if (w.runs > 0) return w;
  w = count_runs(model, window_days, [](std::size_t) { return true; });
  w.whole_season = true;
  return w;
}

}  // namespace isohypse
