#include "stages/verify/state_climatology.hpp"

#include <algorithm>
#include <set>

#include "isohypse/base/error.hpp"
#include "stages/verify/verification_cases.hpp"

namespace isohypse::verification {

namespace {

constexpr const char* kMonthName[] = {"January", "February", "March",     "April",   "May",      "June",
                                      "July",    "August",   "September", "October", "November", "December"};

// Counts the record's days per calendar month and state; a month with no day
// is NaN rather than 0 so that it can never pass for a reference.
void add_monthly_table(const RegimeModel& model, StateClimatology& c) {
  const int k = model.k();
  if (model.labels.size() != model.dates.size())
    throw DataError(model.path + ": the record has " + std::to_string(model.labels.size()) + " labels for " +
                    std::to_string(model.dates.size()) + " dates");
  arma::mat counts(static_cast<arma::uword>(k) + 1, 12, arma::fill::zeros);
  for (std::size_t t = 0; t < model.dates.size(); ++t) {
    const int label = model.labels[t], month = model.dates[t].month;
    if (label < -1 || label >= k)
      throw DataError(model.path + ": record label " + std::to_string(label) + " on " + to_string(model.dates[t]) +
                      " outside -1.." + std::to_string(k - 1));
    if (month < 1 || month > 12) throw DataError(model.path + ": record date " + to_string(model.dates[t]));
    counts(label < 0 ? k : label, month - 1) += 1;  // -1: no regime, the last state
  }
  c.monthly.assign(12, arma::vec());
  for (int m = 0; m < 12; ++m) {
    const double days = arma::accu(counts.col(m));
    c.monthly_days[m] = static_cast<std::size_t>(days);
    c.monthly[m] = days > 0 ? arma::vec(counts.col(m) / days) : arma::vec(k + 1, arma::fill::value(arma::datum::nan));
  }
}

}  // namespace

const arma::vec& StateClimatology::reference(int month) const {
  if (monthly.empty()) return frequency;
  if (month < 1 || month > 12) throw InternalError("verify: a case of month " + std::to_string(month));
  return monthly[static_cast<std::size_t>(month - 1)];
}

StateClimatology state_climatology(const RegimeModel& model, bool all_months) {
  const int k = model.k();
  StateClimatology c;
  c.states = model_states(model);
  c.frequency.set_size(k + 1);
  double regime_sum = 0;
  for (int r = 0; r < k; ++r) regime_sum += (c.frequency(r) = model.regimes[r].frequency);
  c.frequency(k) = std::max(0.0, 1.0 - regime_sum);
  if (all_months) add_monthly_table(model, c);
  return c;
}

void require_reference_months(const StateClimatology& climatology, const Cases& cases, const std::string& model_file) {
  if (!climatology.by_month()) return;
  std::set<int> months;
  for (const Case& c : cases.list) months.insert(c.month);
  for (int m : months)
    if (m < 1 || m > 12 || climatology.monthly_days[static_cast<std::size_t>(m - 1)] == 0)
      throw InputError("--all-months: the record of regime model " + model_file + " holds no day of " +
                       (m >= 1 && m <= 12 ? kMonthName[m - 1] : "month " + std::to_string(m)) +
                       ", so guidance valid in that month has no monthly climatology to be scored against; "
                       "leave out --all-months or restrict --from/--to");
}

}  // namespace isohypse::verification
