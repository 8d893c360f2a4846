// Student's t distribution with a whole number of degrees of freedom: the
// central probability and its inverse, for intervals of the form
// estimate +- t * standard error with few independent pieces of data.
#pragma once

namespace isohypse {

// P(|T| <= t) for T with df degrees of freedom, by the finite sums of
// Abramowitz & Stegun (1964, Handbook of Mathematical Functions, 26.7.3
// for odd df, 26.7.4 for even df): exact up to rounding. 0 for t <= 0.
// Throws InputError for df < 1 or t NaN.
double student_t_central_probability(double t, int df);

// The t > 0 with P(|T| <= t) = level, i.e. the (1 + level)/2 quantile
// (scipy.stats.t.ppf((1 + level) / 2, df)), found by bisection on
// student_t_central_probability to a relative 1e-13. Throws InputError for
// df < 1 or level outside (0, 1).
double student_t_central_quantile(double level, int df);

}  // namespace isohypse
