// Distribution functions the stages share, from Boost.Math (students_t, normal): accurate to
// a few ulp for any positive df, and safe to call from many threads.
//   normal_quantile(0.975) = 1.959963984540054 (R qnorm)
//   student_t_quantile(0.975, 10) = 2.228138851986274 (R qt)
#pragma once

#include <vector>

namespace vzero::detail {

// Quantiles; NaN outside 0 < p < 1 or for df ≤ 0. The t quantile of the same (p, df) is
// remembered per thread: the rate finder asks for the same few many times per well.
double normal_quantile(double p);
double student_t_quantile(double p, double df);
// Upper tail P(T > t) of Student's t with df degrees of freedom, computed as a tail (no
// cancellation in 1 − P far out).
double student_t_sf(double t, double df);

// The median of the steps between consecutive times (0 for fewer than two): the read
// interval `inspect` shows and the time-unit rule judges.
double median_step(const std::vector<double>& t);

}  // namespace vzero::detail
