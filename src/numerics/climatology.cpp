#include "isohypse/numerics/climatology.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "isohypse/base/error.hpp"

namespace isohypse {

arma::rowvec Climatology::basis(const Date& d) const {
  arma::rowvec b(1 + 2 * harmonics + (detrend ? 1 : 0));
  const double f = (day_of_year(d) - 1.0) / days_in_year(d.year, d.calendar);
  b(0) = 1.0;
  for (int n = 1; n <= harmonics; ++n) {
    b(2 * n - 1) = std::cos(2.0 * M_PI * n * f);
    b(2 * n) = std::sin(2.0 * M_PI * n * f);
  }
  if (detrend) {
    Date real = to_real_calendar(d);
    b(b.n_elem - 1) = static_cast<double>(day_number(real) - day_number(trend_origin));
  }
  return b;
}

namespace {

// The climatology of one date at every point, in double, into `acc` (sized
// to the points): a few terms per value, column by column (contiguous,
// vectorised), no BLAS call (it would be the process's first, paying
// OpenBLAS's start-up on classify's critical path).
void climatology_of_day(const Climatology& clim, const Date& d, std::vector<double>& acc) {
  const arma::rowvec b = clim.basis(d);
  std::fill(acc.begin(), acc.end(), 0.0);
  const arma::uword np = clim.coefficients.n_rows;
  for (arma::uword k = 0; k < clim.coefficients.n_cols; ++k) {
    const double* col = clim.coefficients.colptr(k);
    const double bk = b(k);
    for (arma::uword p = 0; p < np; ++p) acc[p] += col[p] * bk;
  }
}

}  // namespace

arma::fmat Climatology::evaluate(const std::vector<Date>& dates) const {
  arma::fmat out(coefficients.n_rows, dates.size(), arma::fill::none);
  std::vector<double> acc(coefficients.n_rows);
  for (std::size_t t = 0; t < dates.size(); ++t) {
    climatology_of_day(*this, dates[t], acc);
    float* o = out.colptr(t);
    for (arma::uword p = 0; p < out.n_rows; ++p) o[p] = static_cast<float>(acc[p]);
  }
  return out;
}

Climatology fit_climatology(const Field& h, const ClimatologyOptions& opt) {
  if (opt.harmonics < 0 || opt.harmonics > 6)
    throw InputError("climatology.harmonics = " + std::to_string(opt.harmonics) + " (allowed 0..6)");
  Climatology c;
  c.harmonics = opt.harmonics;
  c.detrend = opt.detrend;
  if (h.dates.empty()) throw InputError("no days to fit a climatology to");
  c.trend_origin = to_real_calendar(h.dates.front());
  const arma::uword nt = h.n_times(), np = h.n_points();
  arma::mat B(nt, 1 + 2 * opt.harmonics + (opt.detrend ? 1 : 0));
  for (arma::uword t = 0; t < nt; ++t) B.row(t) = c.basis(h.dates[t]);
  if (opt.detrend) B.col(B.n_cols - 1) /= 3652.5;  // per decade: better conditioned
  const arma::uword ncoef = B.n_cols;
  if (nt < 2 * ncoef)
    throw NumericalError("only " + std::to_string(nt) + " days for a climatology of " + std::to_string(ncoef) +
                         " coefficients; give a longer record or fewer harmonics");
  c.coefficients.set_size(np, ncoef);
  const arma::mat BtB_inv = arma::inv_sympd(B.t() * B);

  // Y B (points x coefficients) in double straight from the float record, a
  // block of points at a time so that the block's sums stay in cache: no
  // double copy of the record. A point with a missing day gets NaN sums and
  // its own solve below.
  arma::mat YB(np, ncoef, arma::fill::zeros);
  const arma::uword block = 256;
  for (arma::uword p0 = 0; p0 < np; p0 += block) {
    const arma::uword nb = std::min(block, np - p0);
    for (arma::uword t = 0; t < nt; ++t) {
      const float* x = h.values.colptr(t) + p0;
      for (arma::uword k = 0; k < ncoef; ++k) {
        const double b = B(t, k);
        double* acc = YB.colptr(k) + p0;
        for (arma::uword i = 0; i < nb; ++i) acc[i] += static_cast<double>(x[i]) * b;
      }
    }
  }
  c.coefficients = YB * BtB_inv;  // BtB_inv is symmetric
  for (arma::uword p = 0; p < np; ++p) {
    if (YB.row(p).is_finite()) continue;
    const arma::rowvec y = arma::conv_to<arma::rowvec>::from(h.values.row(p));
    arma::uvec ok = arma::find_finite(y);
    if (ok.n_elem < 2 * ncoef)
      throw NumericalError("grid point " + std::to_string(p) + " (lat " +
                           std::to_string(h.grid.lat(p / h.grid.n_lon())) + ", lon " +
                           std::to_string(h.grid.lon(p % h.grid.n_lon())) + ") has only " +
                           std::to_string(ok.n_elem) + " valid days");
    arma::mat Bi = B.rows(ok);
    c.coefficients.row(p) = arma::solve(Bi, arma::vec(y.cols(ok).t())).t();
  }
  if (opt.detrend) c.coefficients.col(ncoef - 1) /= 3652.5;
  return c;
}

void subtract_climatology(Field& h, const Climatology& clim) {
  // Day by day into one reused column (no climatology field the size of the record).
  const arma::uword np = clim.coefficients.n_rows;
  if (np != h.n_points())
    throw InputError("climatology of " + std::to_string(np) + " points for a field of " +
                     std::to_string(h.n_points()));
  std::vector<double> acc(np);
  for (arma::uword t = 0; t < h.n_times(); ++t) {
    climatology_of_day(clim, h.dates[t], acc);
    float* v = h.values.colptr(t);
    for (arma::uword p = 0; p < np; ++p) v[p] -= static_cast<float>(acc[p]);
  }
  h.units = "m (anomaly)";
}

std::vector<MeanWindow> running_mean_windows(const std::vector<Date>& dates, int days) {
  const arma::uword nt = dates.size();
  std::vector<MeanWindow> windows(nt);
  if (days <= 1) {
    for (arma::uword t = 0; t < nt; ++t) windows[t] = {t, t};
    return windows;
  }
  const std::vector<char> next = consecutive_flags(dates);
  const arma::uword half_lo = (days - 1) / 2, half_hi = days / 2;
  arma::uword run_start = 0;
  for (arma::uword t = 0; t < nt; ++t) {
    if (!next[t]) run_start = t;
    arma::uword run_end = t;
    while (run_end + 1 < nt && next[run_end + 1] && run_end + 1 <= t + half_hi) ++run_end;
    windows[t] = {t >= run_start + half_lo ? t - half_lo : run_start, run_end};
  }
  return windows;
}

namespace {

template <class T>
void running_mean_impl(arma::Mat<T>& v, const std::vector<Date>& dates, int days) {
  if (days <= 1) return;
  const std::vector<MeanWindow> windows = running_mean_windows(dates, days);
  const arma::uword nt = v.n_cols, np = v.n_rows;
  arma::Mat<T> out(np, nt, arma::fill::none);
  std::vector<T> sum(np), cnt(np);
  for (arma::uword t = 0; t < nt; ++t) {
    std::fill(sum.begin(), sum.end(), T(0));
    std::fill(cnt.begin(), cnt.end(), T(0));
    for (arma::uword s = windows[t].lo; s <= windows[t].hi; ++s) {
      const T* col = v.colptr(s);
      for (arma::uword p = 0; p < np; ++p)
        if (!std::isnan(col[p])) {
          sum[p] += col[p];
          cnt[p] += 1;
        }
    }
    T* o = out.colptr(t);
    for (arma::uword p = 0; p < np; ++p) o[p] = cnt[p] > 0 ? sum[p] / cnt[p] : std::numeric_limits<T>::quiet_NaN();
  }
  v = std::move(out);
}

}  // namespace

void running_mean(arma::fmat& v, const std::vector<Date>& dates, int days) { running_mean_impl(v, dates, days); }
void running_mean(arma::mat& v, const std::vector<Date>& dates, int days) { running_mean_impl(v, dates, days); }

}  // namespace isohypse
