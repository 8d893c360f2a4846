#include "stages/calibrate/calibration_fit.hpp"

#include <algorithm>
#include <cmath>

#include "base/parallel.hpp"
#include "isohypse/numerics/scores.hpp"

namespace isohypse {

namespace {

std::vector<int> pick(const std::vector<int>& v, const arma::uvec& rows) {
  std::vector<int> out;
  for (arma::uword r : rows) out.push_back(v[r]);
  return out;
}

// NaN entries take the nearest finite value (1 when there is none: the raw probabilities).
arma::vec fill_gaps(arma::vec a) {
  const arma::uvec finite = arma::find_finite(a);
  for (arma::uword i = 0; i < a.n_elem; ++i) {
    if (std::isfinite(a(i))) continue;
    if (finite.is_empty()) {
      a(i) = 1.0;
      continue;
    }
    arma::uword best = finite(0);
    for (arma::uword f : finite)
      if (std::abs(double(f) - double(i)) < std::abs(double(best) - double(i))) best = f;
    a(i) = a(best);
  }
  return a;
}

// The blend fit on the cases `use` (a mask). Smoothed in lead by pooling:
// a(L) is the closed form over the cases of the leads in a centred window
// of coefficient_smoothing_days around L, the least-squares fit of those
// leads together (averaging per-lead values instead would carry their
// clipping at 1 into the neighbours), shrunk towards 0 by its jackknife
// standard error over the season years (numerics/calibration.hpp), then
// clipped.
// The closed form's sums of each case alone (they do not depend on which
// cases a fit uses, so they are formed once for all the refits).
std::vector<BlendSums> case_sums(const CalibrationCases& cs) {
  std::vector<BlendSums> out;
  out.reserve(cs.lead.size());
  for (arma::uword i = 0; i < cs.lead.size(); ++i) {
    const arma::uvec one{i};
    out.push_back(blend_sums(cs.p.rows(one), cs.c.rows(one), {cs.observed[i]}, cs.members.elem(one)));
  }
  return out;
}

void fit_blend(const CalibrationCases& cs, const std::vector<BlendSums>& per_case, const arma::uvec& use,
               Calibration& c) {
  const int L = cs.n_leads, days = std::max(c.coefficient_smoothing_days, 1);
  const auto n = static_cast<arma::uword>(L);
  c.blend_unsmoothed.set_size(n);
  c.blend.set_size(n);
  c.blend_fitted.set_size(n);
  c.blend_standard_error.set_size(n);
  c.cases.assign(static_cast<std::size_t>(L), 0);
  c.blend_groups.assign(n, {});
  std::vector<int> years = cs.year;
  std::sort(years.begin(), years.end());
  years.erase(std::unique(years.begin(), years.end()), years.end());
  // Sums of the closed form by lead and season year.
  std::vector<std::vector<BlendSums>> sums(n, std::vector<BlendSums>(years.size()));
  std::vector<std::vector<arma::uword>> by_lead(n);
  for (arma::uword i = 0; i < use.n_elem; ++i) {
    if (!use(i)) continue;
    by_lead[static_cast<std::size_t>(cs.lead[i])].push_back(i);
    const auto y = static_cast<std::size_t>(std::lower_bound(years.begin(), years.end(), cs.year[i]) - years.begin());
    sums[static_cast<std::size_t>(cs.lead[i])][y] += per_case[i];
  }
  const double nan = arma::datum::nan;
  for (int l = 0; l < L; ++l) {
    const auto& own = by_lead[static_cast<std::size_t>(l)];
    c.cases[static_cast<std::size_t>(l)] = own.size();
    c.blend_unsmoothed(l) = own.size() >= kMinCasesPerLead
                                ? blend_coefficient(cs.p.rows(arma::uvec(own)), cs.c.rows(arma::uvec(own)),
                                                    pick(cs.observed, arma::uvec(own)))
                                : nan;
    std::vector<BlendSums> pooled(years.size());
    arma::uword cases = 0;
    for (int u = std::max(0, l - (days - 1) / 2); u <= std::min(L - 1, l + days / 2); ++u)
      for (std::size_t y = 0; y < years.size(); ++y) {
        pooled[y] += sums[static_cast<std::size_t>(u)][y];
        cases += sums[static_cast<std::size_t>(u)][y].cases;
      }
    const ShrunkBlend b = cases >= kMinCasesPerLead ? shrunk_blend_coefficient(pooled, c.shrinkage_z)
                                                    : ShrunkBlend{nan, nan, nan};
    c.blend(l) = b.coefficient;
    c.blend_groups[static_cast<std::size_t>(l)] = pooled;
    c.blend_fitted(l) = b.fitted;
    c.blend_standard_error(l) = b.standard_error;
  }
  c.blend = fill_gaps(c.blend);
}

arma::uvec in_window(const CalibrationCases& cs, const LeadWindow& w) {
  arma::uvec m(cs.lead.size());
  for (std::size_t i = 0; i < cs.lead.size(); ++i) m(i) = cs.lead[i] >= w.first && cs.lead[i] <= w.second;
  return m;
}

// start: the fit on every year per window (empty: from zero).
void fit_logistic(const CalibrationCases& cs, const arma::mat& X, const arma::uvec& use,
                  const std::vector<LogisticModel>& start, Calibration& c) {
  c.logistic.clear();
  for (std::size_t wi = 0; wi < c.windows.size(); ++wi) {
    const LeadWindow& w = c.windows[wi];
    const arma::uvec rows = arma::find(use && in_window(cs, w));
    if (rows.is_empty()) {  // no case in the window: the model of the nearest fitted one follows
      c.logistic.push_back(c.logistic.empty() ? LogisticModel{} : c.logistic.back());
      continue;
    }
    c.logistic.push_back(
        fit_multinomial_logistic(X.rows(rows), pick(cs.observed, rows), static_cast<int>(cs.p.n_cols), c.penalty_c,
                                 wi < start.size() ? &start[wi] : nullptr));
  }
}

void fit(const CalibrationCases& cs, const std::vector<BlendSums>& per_case, const arma::mat& X, const arma::uvec& use,
         const std::vector<LogisticModel>& start, Calibration& c) {
  fit_blend(cs, per_case, use, c);
  if (c.method != CalibrationMethod::Blend) fit_logistic(cs, X, use, start, c);
}

CalibrationScores score_window(const CalibrationCases& cs, const arma::mat& calibrated, const LeadWindow& w) {
  CalibrationScores s;
  s.first = w.first;
  s.last = w.second;
  const arma::uvec rows = arma::find(in_window(cs, w));
  s.cases = rows.n_elem;
  if (rows.is_empty()) {
    const double nan = arma::datum::nan;
    s.brier_raw = s.brier_calibrated = s.brier_climatology = s.skill_raw = s.skill_calibrated = nan;
    s.reliability_raw = s.reliability_calibrated = s.resolution_raw = s.resolution_calibrated = nan;
    s.hit_rate_raw = s.hit_rate_calibrated = s.departure_raw = s.departure_calibrated = nan;
    return s;
  }
  const std::vector<int> o = pick(cs.observed, rows);
  const arma::mat raw = cs.p.rows(rows), cal = calibrated.rows(rows), clim = cs.c.rows(rows);
  s.brier_raw = mean_multicategory_brier(raw, o);
  s.brier_calibrated = mean_multicategory_brier(cal, o);
  s.brier_climatology = mean_multicategory_brier(clim, o);
  s.skill_raw = skill_score(s.brier_raw, s.brier_climatology);
  s.skill_calibrated = skill_score(s.brier_calibrated, s.brier_climatology);
  double hit_raw = 0, hit_cal = 0;
  for (arma::uword i = 0; i < rows.n_elem; ++i) {
    hit_raw += raw.row(i).index_max() == arma::uword(o[i]);
    hit_cal += cal.row(i).index_max() == arma::uword(o[i]);
  }
  s.departure_raw = arma::abs(raw - clim).max();
  s.departure_calibrated = arma::abs(cal - clim).max();
  s.hit_rate_raw = hit_raw / rows.n_elem;
  s.hit_rate_calibrated = hit_cal / rows.n_elem;
  for (arma::uword k = 0; k < raw.n_cols; ++k) {
    arma::vec happened(rows.n_elem);
    for (arma::uword i = 0; i < rows.n_elem; ++i) happened(i) = o[i] == int(k) ? 1.0 : 0.0;
    const BrierParts r = binned_brier_decomposition(raw.col(k), happened, 10);
    const BrierParts b = binned_brier_decomposition(arma::clamp(cal.col(k), 0.0, 1.0), happened, 10);
    s.reliability_raw += r.reliability;
    s.reliability_calibrated += b.reliability;
    s.resolution_raw += r.resolution;
    s.resolution_calibrated += b.resolution;
  }
  return s;
}

}  // namespace

arma::mat apply_calibration(const Calibration& c, const CalibrationCases& cs, const arma::uvec& rows) {
  arma::mat out(rows.n_elem, cs.p.n_cols);
  const bool any_logistic = c.method != CalibrationMethod::Blend;
  const arma::mat X = any_logistic ? logistic_features(cs.p.rows(rows), cs.members.elem(rows), cs.c.rows(rows))
                                   : arma::mat();
  for (arma::uword i = 0; i < rows.n_elem; ++i) {
    const arma::uword r = rows(i);
    const int lead = cs.lead[r];
    if (c.method_at(lead) == CalibrationMethod::Blend)
      out.row(i) = cs.c.row(r) + c.blend_at(lead) * (cs.p.row(r) - cs.c.row(r));
    else
      out.row(i) = logistic_probabilities(c.logistic[static_cast<std::size_t>(c.window_of(lead))], X.row(i));
  }
  return out;
}

namespace {

// Auto: per window, the method whose cross-validated probabilities have
// the lower mean multi-category Brier score (the blend on a tie).
std::vector<CalibrationMethod> choose_methods(const CalibrationCases& cs, const std::vector<LeadWindow>& windows,
                                              const arma::mat& blend, const arma::mat& logistic) {
  std::vector<CalibrationMethod> out;
  for (const auto& w : windows) {
    const arma::uvec rows = arma::find(in_window(cs, w));
    const std::vector<int> o = pick(cs.observed, rows);
    const bool better = !rows.is_empty() && mean_multicategory_brier(logistic.rows(rows), o) <
                                                mean_multicategory_brier(blend.rows(rows), o);
    out.push_back(better ? CalibrationMethod::Logistic : CalibrationMethod::Blend);
  }
  return out;
}

}  // namespace

arma::mat fit_calibration(const CalibrationCases& cs, const std::vector<int>& years, const std::vector<LeadWindow>& windows,
                          Calibration& c, int threads, const CalibrateProgress& report) {
  c.windows = windows;
  const CalibrationMethod one = c.method == CalibrationMethod::Logistic ? CalibrationMethod::Logistic
                                                                        : CalibrationMethod::Blend;
  c.window_methods.assign(windows.size(), one);
  const std::vector<BlendSums> per_case = case_sums(cs);
  const arma::mat X = c.method != CalibrationMethod::Blend ? logistic_features(cs.p, cs.members, cs.c) : arma::mat();
  // The fit on every year first: the leave-one-year-out refits start from its logistic models.
  Calibration all = c;
  fit(cs, per_case, X, arma::ones<arma::uvec>(cs.year.size()), {}, all);
  arma::mat cross(cs.p.n_rows, cs.p.n_cols), cross_logistic;
  if (c.method == CalibrationMethod::Auto) cross_logistic.set_size(cs.p.n_rows, cs.p.n_cols);
  report("fit", 0, static_cast<int>(years.size()));
  detail::parallel_for(
      years.size(), threads,
      [&](std::size_t y) {  // each year writes its own rows of cross
        arma::uvec held(cs.year.size());
        for (std::size_t i = 0; i < cs.year.size(); ++i) held(i) = cs.year[i] == years[y];
        Calibration without = c;
        fit(cs, per_case, X, held == 0, all.logistic, without);
        const arma::uvec rows = arma::find(held);
        if (rows.is_empty()) return;
        cross.rows(rows) = apply_calibration(without, cs, rows);  // auto: every window blended
        if (c.method != CalibrationMethod::Auto) return;
        without.window_methods.assign(windows.size(), CalibrationMethod::Logistic);
        cross_logistic.rows(rows) = apply_calibration(without, cs, rows);
      },
      [&](std::size_t done, std::size_t total) { report("fit", static_cast<int>(done), static_cast<int>(total)); });
  if (c.method == CalibrationMethod::Auto) {
    c.window_methods = choose_methods(cs, windows, cross, cross_logistic);
    for (arma::uword i = 0; i < cross.n_rows; ++i)
      if (c.method_at(cs.lead[i]) == CalibrationMethod::Logistic) cross.row(i) = cross_logistic.row(i);
  }
  all.window_methods = c.window_methods;
  c = std::move(all);
  c.scores.clear();
  for (const auto& w : windows) c.scores.push_back(score_window(cs, cross, w));
  return cross;
}

}  // namespace isohypse
