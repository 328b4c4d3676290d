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
//   robust_z = (v0 − median of the plate's unflagged sample v0)/(1.4826·their MAD)
//   trends (edge and drift): the controls' v0 in % of μ₊ − μ₋ against row, column, position and
//   edge, one least-squares slope shared by both controls with an intercept each (src/plate_trend.cpp)
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
  double trend_level = 0.01;       // a control trend with p below this is warned of (common practice: 0.01)
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

// Both controls of one channel of one plate, from its rows (set by analyse_run), and the
// plate's unflagged sample rates (for each sample's robust z-score).
struct PlateControls {
  ControlStats full, none;
  ControlStats samples;
  // Both controls have at least one unflagged rate and different means: activity is defined.
  bool normalisable() const { return full.n > 0 && none.n > 0 && full.mean != none.mean; }
  double activity_pct(double v0) const {
    return normalisable() ? 100 * (v0 - none.mean) / (full.mean - none.mean) : NAN;
  }
  // (v0 − median)/(1.4826·MAD) of the plate's unflagged samples; NaN when their MAD is 0 or
  // undefined (fewer than two samples).
  double robust_z(double v0) const {
    return samples.robust_sd > 0 ? (v0 - samples.median) / samples.robust_sd : NAN;
  }
};

// Edge and drift effects: one trend of the controls' rates against a plate coordinate.
// Each control well's v0 is taken in % of the control window, y = 100·v0/(μ₊ − μ₋), and
// y = a_control + b·x is fitted by least squares with one intercept per control and a
// slope b shared by both (analysis of covariance: the slope from the deviations of x and y
// from each control's own means; Snedecor & Cochran, Statistical Methods, 8th ed., 1989,
// ch. 18, from memory). t = b/SE(b) with n − 3 degrees of freedom (n − 2 with one control),
// p two-sided. change_pct = b × the coordinate's extent on the plate (rows − 1, columns − 1,
// wells − 1; edge: 1, the edge wells' level minus the inner wells'): activity points.
struct Trend {
  double slope = NAN, p = NAN, change_pct = NAN;  // NaN when it cannot be tested (below)
  int n = 0;                                       // control wells used
};

// The four coordinates, 0-based: row, column, position (row-major well index A1, A2, …: the
// order of a plate read row by row) and edge (1 for a well in the outer rows or columns).
struct PlateTrends {
  Trend row, column, position, edge;
  double level = NAN;  // --trend-level
  // The coordinates whose p is below `level`, ';'-separated ("" when none).
  std::string significant() const;
};

// One control well for the trend test.
struct ControlPoint {
  int row = 0, column = 0;  // 0-based
  bool full = true;         // full-activity (else no-activity)
  double v0 = NAN;
};

// The trends of `points` (unflagged control wells with a finite v0) on a plate of `rows` ×
// `columns`, against the control window of `controls`. A coordinate is untested (NaN) when
// the controls are not normalisable, fewer than one degree of freedom is left, or the
// coordinate does not vary within a control.
PlateTrends control_trends(const std::vector<ControlPoint>& points, int rows, int columns,
                           const PlateControls& controls, double level);

struct RunAnalysis;
struct ChannelAnalysis;
// The trends of one channel of one plate: its unflagged control wells, its plate format.
PlateTrends channel_trends(const RunAnalysis& run, const ChannelAnalysis& channel, double level);

}  // namespace vzero
