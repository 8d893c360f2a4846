#include "isohypse/numerics/student_t.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <string>

#include "isohypse/base/error.hpp"

namespace isohypse {

double student_t_central_probability(double t, int df) {
  if (df < 1) throw InputError("student_t_central_probability: degrees of freedom must be at least 1; found " +
                               std::to_string(df));
  if (std::isnan(t)) throw InputError("student_t_central_probability: t is NaN");
  if (t <= 0) return 0.0;
  if (std::isinf(t)) return 1.0;
  // theta = atan(t / sqrt(df)); the sums run over powers of cos(theta) up to df - 2, each term from the one before.
  const double theta = std::atan(t / std::sqrt(static_cast<double>(df)));
  const double c2 = std::cos(theta) * std::cos(theta);
  if (df % 2 == 1) {
    double term = std::cos(theta), sum = 0.0;
    for (int j = 1; 2 * j + 1 <= df; ++j) {  // cos, (2/3) cos^3, (2*4)/(3*5) cos^5, ... cos^(df - 2)
      sum += term;
      term *= c2 * (2.0 * j) / (2.0 * j + 1);
    }
    return std::min(1.0, 2.0 / std::numbers::pi * (theta + std::sin(theta) * sum));
  }
  double term = 1.0, sum = 0.0;
  for (int j = 1; 2 * j <= df; ++j) {  // 1, (1/2) cos^2, (1*3)/(2*4) cos^4, ... cos^(df - 2)
    sum += term;
    term *= c2 * (2.0 * j - 1) / (2.0 * j);
  }
  return std::min(1.0, std::sin(theta) * sum);
}

double student_t_central_quantile(double level, int df) {
  if (df < 1)
    throw InputError("student_t_central_quantile: degrees of freedom must be at least 1; found " + std::to_string(df));
  if (!(level > 0.0 && level < 1.0))
    throw InputError("student_t_central_quantile: level must be in (0, 1); found " + std::to_string(level));
  // The probability rises strictly with t: bracket the root by doubling, then halve the bracket.
  double lo = 0.0, hi = 1.0;
  while (student_t_central_probability(hi, df) < level) {
    lo = hi;
    hi *= 2.0;
  }
  for (int it = 0; it < 200 && hi - lo > 1e-13 * hi; ++it) {
    const double mid = 0.5 * (lo + hi);
    (student_t_central_probability(mid, df) < level ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

}  // namespace isohypse
