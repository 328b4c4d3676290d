// Screening: the quality of a plate from its two controls, and each well's activity relative
// to them. The controls are plate-map roles (include/vzero/plate_map.hpp): `full-activity`
// (the uninhibited reaction, 100 %) and `no-activity` (fully inhibited or no enzyme, 0 %).
// Only their unflagged rates count (a flagged control's v0 is not trusted).
//
//   Z′ = 1 − 3(σ₊ + σ₋)/|μ₊ − μ₋|            Zhang, Chung & Oldenburg, J. Biomol. Screen. 4:67 (1999)
//   signal window = (|μ₊ − μ₋| − 3(σ₊ + σ₋))/σ₊   Sittampalam et al. 1997; Iversen et al., J. Biomol.
//                                              Screen. 11:247 (2006)
//   signal-to-background = μ₊/μ₋ (only when μ₋ > 0)
//   CV = 100·σ/|μ|, σ the sample standard deviation (n − 1)
//   robust variants: median for μ, 1.4826·MAD for σ (MAD scaled to σ for normal data)
//   activity_pct = 100·(v0 − μ₋)/(μ₊ − μ₋), inhibition_pct = 100 − activity_pct
//
// **Example**:
//   vzero::ControlStats hi = vzero::control_stats({10, 11, 9}), lo = vzero::control_stats({1, 1.5, 0.5});
//   vzero::PlateQuality q = vzero::plate_quality(hi, lo, 0.5);  // q.z_prime = 1 − 3·1.5/9 = 0.5
#pragma once

#include <cmath>
#include <string>
#include <string_view>
#include <vector>

namespace vzero {

// What the screening options ask for (`vzero rates --plate-quality/--min-z-prime/--hit-threshold`).
struct ScreenOptions {
  double min_z_prime = 0.5;        // common practice: an assay with Z′ ≥ 0.5 is fit for screening
  double hit_threshold_pct = NAN;  // % inhibition at or above which a sample is a hit (NaN = no calls)
};

// The screening columns of rates.csv: `normalised` (the plate map has both control roles)
// adds activity_pct and inhibition_pct beside v0; a hit threshold (% inhibition) with them
// adds `hit` (include/vzero/outputs.hpp). Runs without controls keep rates.csv as it was.
struct ScreenColumns {
  bool normalised = false;
  double hit_threshold_pct = NAN;
  bool hits() const { return normalised && !std::isnan(hit_threshold_pct); }
};

// One control's unflagged rates.
struct ControlStats {
  int n = 0;                                  // rates used
  int n_flagged = 0;                          // control wells left out because flagged or without a rate
  double mean = NAN, sd = NAN, cv_pct = NAN;  // sd with n − 1; NaN below 2 rates
  double median = NAN, robust_sd = NAN, robust_cv_pct = NAN;  // robust_sd = 1.4826·MAD
};

// The statistics of `rates` (the finite ones; `n_flagged` is left to the caller).
ControlStats control_stats(std::vector<double> rates);

enum class QualityVerdict { pass, below, undetermined };
std::string_view to_string(QualityVerdict v);  // "pass", "below-threshold", "undetermined"

struct PlateQuality {
  double z_prime = NAN, signal_window = NAN, signal_to_background = NAN;
  double robust_z_prime = NAN, robust_signal_window = NAN, robust_signal_to_background = NAN;
  double min_z_prime = NAN;
  // pass: Z′ ≥ min_z_prime; below: Z′ < min_z_prime; undetermined: Z′ cannot be computed
  // (fewer than two unflagged rates of a control, or equal means).
  QualityVerdict verdict = QualityVerdict::undetermined;
};

PlateQuality plate_quality(const ControlStats& full, const ControlStats& none, double min_z_prime);

// Both controls of one channel of one plate, from its rows (set by analyse_run).
struct PlateControls {
  ControlStats full, none;
  // Both controls have at least one unflagged rate and different means: activity is defined.
  bool normalisable() const { return full.n > 0 && none.n > 0 && full.mean != none.mean; }
  double activity_pct(double v0) const {
    return normalisable() ? 100 * (v0 - none.mean) / (full.mean - none.mean) : NAN;
  }
};

}  // namespace vzero
