#include "isohypse/numerics/calibration.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "isohypse/base/error.hpp"

namespace isohypse {

namespace {

void check_cases(const arma::mat& p, const arma::mat& c, const std::vector<int>& observed, const char* who) {
  if (p.n_rows != c.n_rows || p.n_cols != c.n_cols || p.n_rows != observed.size())
    throw InternalError(std::string(who) + ": " + std::to_string(p.n_rows) + " x " + std::to_string(p.n_cols) +
                        " probabilities, " + std::to_string(c.n_rows) + " x " + std::to_string(c.n_cols) +
                        " climatological frequencies and " + std::to_string(observed.size()) + " outcomes");
  for (int o : observed)
    if (o < 0 || o >= static_cast<int>(p.n_cols))
      throw InternalError(std::string(who) + ": observed state " + std::to_string(o) + " outside 0.." +
                          std::to_string(p.n_cols - 1));
}

// Softmax of each row of the scores (cases x S), shifted by the row maximum against overflow.
arma::mat softmax_rows(arma::mat s) {
  s.each_col() -= arma::max(s, 1);
  s = arma::exp(s);
  s.each_col() /= arma::sum(s, 1);
  return s;
}

// The penalised negative log-likelihood of parameters theta = [vec(W); b]
// (W column-major, S x F).
double objective(const arma::mat& X, const std::vector<int>& y, const arma::mat& W, const arma::vec& b, double C) {
  arma::mat s = X * W.t();
  s.each_row() += b.t();
  const arma::vec mx = arma::max(s, 1);
  double f = 0;
  for (arma::uword i = 0; i < X.n_rows; ++i)
    f -= s(i, static_cast<arma::uword>(y[i])) - mx(i) - std::log(arma::accu(arma::exp(s.row(i) - mx(i))));
  return f + arma::accu(arma::square(W)) / (2.0 * C);
}

}  // namespace

BlendSums blend_sums(const arma::mat& p, const arma::mat& c, const std::vector<int>& observed,
                     const arma::vec& members) {
  check_cases(p, c, observed, "blend_sums");
  if (!members.is_empty() && members.n_elem != p.n_rows)
    throw InternalError("blend_sums: " + std::to_string(members.n_elem) + " member counts for " +
                        std::to_string(p.n_rows) + " cases");
  BlendSums s;
  s.cases = p.n_rows;
  for (arma::uword i = 0; i < p.n_rows; ++i) {
    const arma::rowvec d = p.row(i) - c.row(i);
    arma::rowvec oc = -c.row(i);
    oc(static_cast<arma::uword>(observed[i])) += 1.0;
    s.numerator += arma::dot(d, oc);
    s.denominator += arma::dot(d, d);
    if (members.is_empty() || members(i) <= 1) continue;
    const double q = arma::dot(p.row(i), 1.0 - p.row(i)) / (members(i) - 1.0);
    s.noise += q;
    s.noise_members += q * members(i);
  }
  return s;
}

BlendSums& operator+=(BlendSums& a, const BlendSums& b) {
  a.numerator += b.numerator;
  a.denominator += b.denominator;
  a.cases += b.cases;
  a.noise += b.noise;
  a.noise_members += b.noise_members;
  return a;
}

BlendSums for_ensemble(const BlendSums& s, double members) {
  BlendSums out = s;
  if (members > 0 && s.noise > 0) out.denominator = s.denominator - s.noise + s.noise_members / members;
  return out;
}

double blend_coefficient(const arma::mat& p, const arma::mat& c, const std::vector<int>& observed) {
  const BlendSums s = blend_sums(p, c, observed);
  if (s.cases == 0 || s.denominator <= 0) return arma::datum::nan;
  return std::clamp(s.numerator / s.denominator, 0.0, 1.0);
}

ShrunkBlend shrunk_blend_coefficient(const std::vector<BlendSums>& groups, double z) {
  const double nan = arma::datum::nan;
  double num = 0, den = 0;
  std::vector<const BlendSums*> held;
  for (const auto& g : groups)
    if (g.cases > 0) num += g.numerator, den += g.denominator, held.push_back(&g);
  if (den <= 0) return {nan, nan, nan};
  ShrunkBlend b;
  b.fitted = num / den;
  b.standard_error = nan;
  const auto G = static_cast<double>(held.size());
  if (held.size() >= 2) {
    std::vector<double> leave_out;
    for (const BlendSums* g : held)
      if (den - g->denominator > 0) leave_out.push_back((num - g->numerator) / (den - g->denominator));
    // A group without which nothing is left to fit makes the fit as doubtful as it gets.
    if (leave_out.size() != held.size()) b.standard_error = arma::datum::inf;
    else {
      double mean = 0, ss = 0;
      for (double a : leave_out) mean += a / G;
      for (double a : leave_out) ss += (a - mean) * (a - mean);
      b.standard_error = std::sqrt((G - 1.0) / G * ss);
    }
  }
  double a = b.fitted;
  if (z > 0 && std::isfinite(b.standard_error))
    a = a <= 0 ? 0.0 : a * std::max(0.0, 1.0 - (z * b.standard_error / a) * (z * b.standard_error / a));
  b.coefficient = std::clamp(a, 0.0, 1.0);
  return b;
}

arma::mat blend_probabilities(const arma::mat& p, const arma::mat& c, double a) { return c + a * (p - c); }

arma::mat logistic_features(const arma::mat& p, const arma::vec& members, const arma::mat& c) {
  if (p.n_rows != members.n_elem || p.n_rows != c.n_rows || p.n_cols != c.n_cols)
    throw InternalError("logistic_features: sizes differ (" + std::to_string(p.n_rows) + " cases, " +
                        std::to_string(members.n_elem) + " member counts, " + std::to_string(c.n_rows) +
                        " climatological rows)");
  const double S = static_cast<double>(p.n_cols);
  arma::mat X(p.n_rows, 2 * p.n_cols);
  for (arma::uword i = 0; i < p.n_rows; ++i)
    for (arma::uword k = 0; k < p.n_cols; ++k) {
      X(i, k) = std::log((p(i, k) * members(i) + 0.5) / (members(i) + 0.5 * S));
      X(i, p.n_cols + k) = std::log(std::max(c(i, k), 1e-6));
    }
  return X;
}

LogisticModel fit_multinomial_logistic(const arma::mat& X, const std::vector<int>& y, int n_states,
                                       double penalty_c, const LogisticModel* start) {
  if (X.n_rows == 0 || X.n_rows != y.size())
    throw InputError("logistic calibration: " + std::to_string(X.n_rows) + " cases and " + std::to_string(y.size()) +
                     " outcomes; at least one case is needed");
  if (!(penalty_c > 0)) throw InputError("logistic calibration: the inverse penalty C must be > 0");
  const arma::uword S = static_cast<arma::uword>(n_states), F = X.n_cols, P = S * (F + 1), n = X.n_rows;
  arma::mat Y(n, S, arma::fill::zeros);
  for (arma::uword i = 0; i < n; ++i) {
    if (y[i] < 0 || y[i] >= n_states) throw InternalError("logistic calibration: a state outside 0..S-1");
    Y(i, static_cast<arma::uword>(y[i])) = 1.0;
  }
  arma::mat Xt = arma::join_rows(X, arma::ones(n));  // the intercept as a last feature
  LogisticModel m;
  m.penalty_c = penalty_c;
  arma::mat W(S, F, arma::fill::zeros);
  arma::vec b(S, arma::fill::zeros);
  if (start && start->weights.n_rows == S && start->weights.n_cols == F && start->intercepts.n_elem == S) {
    W = start->weights;
    b = start->intercepts;
  }
  for (int it = 0; it < 100; ++it) {
    arma::mat s = X * W.t();
    s.each_row() += b.t();
    const arma::mat Pr = softmax_rows(s);
    // Gradient: (Pr - Y)' Xt per state, plus W / C on the weights.
    arma::mat G = (Pr - Y).t() * Xt;  // S x (F + 1)
    G.cols(0, F - 1) += W / penalty_c;
    // Hessian: sum_i (diag(p_i) - p_i p_i') kron x_i x_i', state-major blocks.
    // Block (k, l) is Xt' diag(h_kl) Xt with h_kl = [k = l] p_k - p_k p_l: one weighted Gram product per pair.
    arma::mat H(P, P, arma::fill::zeros);
    for (arma::uword k = 0; k < S; ++k)
      for (arma::uword l = k; l < S; ++l) {
        arma::vec h = -Pr.col(k) % Pr.col(l);
        if (k == l) h += Pr.col(k);
        const arma::mat block = Xt.t() * (Xt.each_col() % h);
        H.submat(k * (F + 1), l * (F + 1), k * (F + 1) + F, l * (F + 1) + F) = block;
        if (l != k) H.submat(l * (F + 1), k * (F + 1), l * (F + 1) + F, k * (F + 1) + F) = block.t();
      }
    for (arma::uword k = 0; k < S; ++k) {
      for (arma::uword f = 0; f < F; ++f) H(k * (F + 1) + f, k * (F + 1) + f) += 1.0 / penalty_c;
      // The softmax is blind to a common shift of the intercepts: fix it (their sum stays 0).
      for (arma::uword l = 0; l < S; ++l) H(k * (F + 1) + F, l * (F + 1) + F) += 1.0;
    }
    const arma::vec g = arma::vectorise(G.t());  // state-major: [state 0's F+1, state 1's ...]
    if (arma::abs(g).max() < 1e-9 * static_cast<double>(n)) {
      m.iterations = it;
      m.weights = W;
      m.intercepts = b - arma::mean(b);
      return m;
    }
    arma::vec step;
    if (!arma::solve(step, H, g, arma::solve_opts::likely_sympd))
      throw NumericalError("logistic calibration: the Newton system is singular");
    const double f0 = objective(X, y, W, b, penalty_c);
    double t = 1.0;
    for (int back = 0; back < 40; ++back, t *= 0.5) {
      const arma::mat D = arma::reshape(step, F + 1, S).t();
      const arma::mat W1 = W - t * D.cols(0, F - 1);
      const arma::vec b1 = b - t * D.col(F);
      if (objective(X, y, W1, b1, penalty_c) <= f0 + 1e-12 * std::abs(f0) || back == 39) {
        W = W1;
        b = b1;
        break;
      }
    }
  }
  throw NumericalError("logistic calibration: Newton's method did not converge in 100 steps (" +
                       std::to_string(n) + " cases)");
}

arma::mat logistic_probabilities(const LogisticModel& model, const arma::mat& X) {
  if (X.n_cols != model.weights.n_cols)
    throw InternalError("logistic_probabilities: " + std::to_string(X.n_cols) + " features for a model of " +
                        std::to_string(model.weights.n_cols));
  arma::mat s = X * model.weights.t();
  s.each_row() += model.intercepts.t();
  return softmax_rows(s);
}

}  // namespace isohypse
