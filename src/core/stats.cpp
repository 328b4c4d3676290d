#include "core/stats.hpp"

#include <algorithm>
#include <boost/math/distributions/normal.hpp>
#include <boost/math/distributions/students_t.hpp>
#include <cmath>
#include <map>
#include <utility>

namespace vzero::detail {

namespace {
// Errors become NaN (the callers check their inputs); nothing throws from here.
using Policy =
    boost::math::policies::policy<boost::math::policies::domain_error<boost::math::policies::ignore_error>,
                                  boost::math::policies::overflow_error<boost::math::policies::ignore_error>,
                                  boost::math::policies::evaluation_error<boost::math::policies::ignore_error>>;
}  // namespace

double normal_quantile(double p) {
  if (!(p > 0 && p < 1)) return NAN;
  return boost::math::quantile(boost::math::normal_distribution<double, Policy>(), p);
}

double student_t_quantile(double p, double df) {
  if (!(p > 0 && p < 1) || !(df > 0)) return NAN;
  thread_local std::map<std::pair<double, double>, double> cache;
  if (const auto it = cache.find({p, df}); it != cache.end()) return it->second;
  const double v = boost::math::quantile(boost::math::students_t_distribution<double, Policy>(df), p);
  if (cache.size() < 100000) cache.emplace(std::make_pair(p, df), v);
  return v;
}

double student_t_sf(double t, double df) {
  if (std::isnan(t) || !(df > 0)) return NAN;
  return boost::math::cdf(boost::math::complement(boost::math::students_t_distribution<double, Policy>(df), t));
}

double median_step(const std::vector<double>& t) {
  std::vector<double> d;
  for (std::size_t i = 1; i < t.size(); ++i) d.push_back(t[i] - t[i - 1]);
  if (d.empty()) return 0;
  std::nth_element(d.begin(), d.begin() + static_cast<std::ptrdiff_t>(d.size() / 2), d.end());
  return d[d.size() / 2];
}

}  // namespace vzero::detail
