// Plate quality from the screening controls (formulas and sources in
// include/vzero/plate_quality.hpp and docs/methods.md).
#include "vzero/plate_quality.hpp"

#include <algorithm>
#include <cmath>

namespace vzero {

namespace {

// Median of a sorted, non-empty list (the mean of the two middle values when even).
double sorted_median(const std::vector<double>& v) {
  const std::size_t n = v.size();
  return n % 2 ? v[n / 2] : (v[n / 2 - 1] + v[n / 2]) / 2;
}

// 1.4826: 1/Φ⁻¹(3/4), which makes the median absolute deviation estimate σ for normal data
// (common practice; Rousseeuw & Croux, J. Am. Stat. Assoc. 88:1273, 1993).
constexpr double k_mad_to_sd = 1.4826;

double cv_pct(double sd, double centre) { return centre != 0 ? 100 * sd / std::fabs(centre) : NAN; }

// Z′ and the signal window for centres and spreads (either the classical or the robust pair).
void separation(double mu_full, double sd_full, double mu_none, double sd_none, double& z, double& window) {
  const double gap = std::fabs(mu_full - mu_none);
  if (!(gap > 0) || std::isnan(sd_full) || std::isnan(sd_none)) return;
  z = 1 - 3 * (sd_full + sd_none) / gap;
  if (sd_full > 0) window = (gap - 3 * (sd_full + sd_none)) / sd_full;
}

}  // namespace

ControlStats control_stats(std::vector<double> rates) {
  rates.erase(std::remove_if(rates.begin(), rates.end(), [](double x) { return !std::isfinite(x); }), rates.end());
  ControlStats s;
  s.n = static_cast<int>(rates.size());
  if (rates.empty()) return s;
  double sum = 0;
  for (double x : rates) sum += x;
  s.mean = sum / s.n;
  std::sort(rates.begin(), rates.end());
  s.median = sorted_median(rates);
  if (s.n < 2) return s;
  double ss = 0;
  for (double x : rates) ss += (x - s.mean) * (x - s.mean);
  s.sd = std::sqrt(ss / (s.n - 1));
  s.cv_pct = cv_pct(s.sd, s.mean);
  std::vector<double> dev;
  dev.reserve(rates.size());
  for (double x : rates) dev.push_back(std::fabs(x - s.median));
  std::sort(dev.begin(), dev.end());
  s.robust_sd = k_mad_to_sd * sorted_median(dev);
  s.robust_cv_pct = cv_pct(s.robust_sd, s.median);
  return s;
}

std::string_view to_string(QualityVerdict v) {
  switch (v) {
    case QualityVerdict::pass:
      return "pass";
    case QualityVerdict::below:
      return "below-threshold";
    case QualityVerdict::undetermined:
      return "undetermined";
  }
  return "undetermined";
}

PlateQuality plate_quality(const ControlStats& full, const ControlStats& none, double min_z_prime) {
  PlateQuality q;
  q.min_z_prime = min_z_prime;
  separation(full.mean, full.sd, none.mean, none.sd, q.z_prime, q.signal_window);
  separation(full.median, full.robust_sd, none.median, none.robust_sd, q.robust_z_prime, q.robust_signal_window);
  if (none.mean > 0) q.signal_to_background = full.mean / none.mean;
  if (none.median > 0) q.robust_signal_to_background = full.median / none.median;
  if (!std::isnan(q.z_prime)) q.verdict = q.z_prime >= min_z_prime ? QualityVerdict::pass : QualityVerdict::below;
  return q;
}

}  // namespace vzero
