// The physics of the plate simulator (tests/sim/plate_sim.hpp), one closed form per function,
// each checked against a value worked by hand in tests/sim_test.cpp. Header-only.
//
//   mm_product            integrated Michaelis–Menten equation (Lambert W closed form)
//   onset_time            hysteretic onset: the same equation on a stretched clock
//   stray_light_absorbance, stray_light_gain   a photometer with stray light
//   disturbance           a start disturbed by mixing: an offset decaying over 1–3 reads
//   line_windows          how well a perfect straight-line window can measure a trace
//
// **Example**:
//   double p = vzero::sim::mm_product(60.0, 100, 50, 0.5);        // µM of product after 60 s
//   double a = vzero::sim::stray_light_absorbance(3.0, 1e-3);     // 2.6994 AU read for 3 AU
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <random>
#include <vector>

namespace vzero::sim {

// Seedable random numbers with fixed algorithms: std::mt19937_64 (whose output sequence the
// C++ standard fixes) through this file's own uniform and Box–Muller normal transforms, so a
// seed gives the same numbers with every compiler and library.
class Rng {
 public:
  explicit Rng(std::uint64_t seed) : engine_(seed) {}
  // Uniform on [0, 1) with 53 random bits.
  double uniform() { return static_cast<double>(engine_() >> 11) * 0x1.0p-53; }
  double uniform(double lo, double hi) { return lo + (hi - lo) * uniform(); }
  double log_uniform(double lo, double hi) { return std::exp(uniform(std::log(lo), std::log(hi))); }
  bool chance(double p) { return uniform() < p; }
  // Integer in [lo, hi].
  int integer(int lo, int hi) { return lo + static_cast<int>(uniform() * (hi - lo + 1)); }
  // Standard normal by the Box–Muller transform (one value per two uniforms).
  double normal() {
    const double u1 = 1.0 - uniform();  // (0, 1]
    const double u2 = uniform();
    return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * 3.14159265358979323846 * u2);
  }

 private:
  std::mt19937_64 engine_;
};

// W0(e^L), the principal branch of Lambert W at e^L, for any real L.
inline double lambert_w0_exp(double L) {
  if (L > 1) {
    // Newton on f(w) = w + ln w − L; f is increasing and concave, so from w₀ = L − ln L
    // (where f ≤ 0) the iterates rise monotonically to the root.
    double w = L - std::log(L);
    for (int i = 0; i < 100; ++i) {
      const double step = (w + std::log(w) - L) / (1 + 1 / w);
      w -= step;
      if (std::fabs(step) <= 1e-16 * w) break;
    }
    return w;
  }
  // Halley on w·e^w = x for x = e^L ≤ e, from Winitzki's approximation.
  const double x = std::exp(L);
  const double l1 = std::log1p(x);
  double w = l1 * (1 - std::log1p(l1) / (2 + l1));
  for (int i = 0; i < 100; ++i) {
    const double ew = std::exp(w);
    const double f = w * ew - x;
    const double step = f / (ew * (w + 1) - (w + 2) * f / (2 * w + 2));
    w -= step;
    if (std::fabs(step) <= 1e-16 * std::max(std::fabs(w), 1e-300)) break;
  }
  return w;
}

// Product formed at time t after the reaction started (same time unit as vmax), from the
// integrated Michaelis–Menten equation Vmax·t = P + Km·ln(S0/(S0 − P)) in the closed form of
// Schnell & Mendoza (1997, J. theor. Biol. 187, 207–212):
//   S(t) = Km·W((S0/Km)·exp((S0 − Vmax·t)/Km)),  P(t) = S0 − S(t),
// W evaluated in log space (w + ln w = L), so arguments beyond the double range (e.g.
// exp(806.9)) still work. 0 for t ≤ 0.
inline double mm_product(double t, double s0, double km, double vmax) {
  if (t <= 0) return 0.0;
  const double L = std::log(s0 / km) + (s0 - vmax * t) / km;
  return s0 - km * lambert_w0_exp(L);
}

// The initial rate at reaction start, Vmax·S0/(Km + S0).
inline double mm_v0(double s0, double km, double vmax) { return vmax * s0 / (km + s0); }

// Hysteretic onset (an enzyme that turns slowly into its active form after mixing, or a
// temperature or coupling lag of the same shape): activity a(t) = 1 − exp(−t/τ) of the
// fully active enzyme, so dS/dt = −a(t)·Vmax·S/(Km + S). With the stretched clock
//   θ(t) = ∫₀ᵗ a(u) du = t − τ·(1 − exp(−t/τ)),
// dS/dθ = −Vmax·S/(Km + S): S(t) is the integrated equation at θ(t), exactly, so the product
// is mm_product(onset_time(t, τ), …). The rate at t = τ is (1 − e⁻¹) of the active enzyme's.
// The truth v0 stays Vmax·S0/(Km + S0): the active enzyme's rate at S0, what an assay of a
// lagging enzyme is meant to report. τ ≤ 0: no lag.
inline double onset_fraction(double t, double tau) { return tau <= 0 ? 1.0 : (t <= 0 ? 0.0 : -std::expm1(-t / tau)); }
inline double onset_time(double t, double tau) {
  if (t <= 0) return 0.0;
  if (tau <= 0) return t;
  return t + tau * std::expm1(-t / tau);
}

// Stray light: a fraction s of the light reaches the detector without being absorbed by the
// sample, so the transmittance read is T_obs = (10^−A + s)/(1 + s) (normalised so that a
// reading of 0 AU stays 0) and
//   A_obs = −log10((10^−A + s)/(1 + s)).
// A_obs never exceeds −log10(s/(1 + s)) (≈ 3 AU for s = 10⁻³), and the slope of a rising
// trace is read compressed by dA_obs/dA = 10^−A/(10^−A + s) (0.5 at A = −log10 s).
// Common practice (the stray-light error of absorbance photometers); the form is from memory.
inline double stray_light_absorbance(double a, double s) { return -std::log10((std::pow(10.0, -a) + s) / (1 + s)); }
inline double stray_light_gain(double a, double s) {
  const double t = std::pow(10.0, -a);
  return t / (t + s);
}
// The absorbance above which stray light compresses slopes by more than `loss` (e.g. 0.05):
// 10^−A/(10^−A + s) = 1 − loss  ⇔  A = −log10(s·(1 − loss)/loss).
inline double stray_light_onset(double s, double loss) { return -std::log10(s * (1 - loss) / loss); }

// Disturbed start (mixing: a meniscus settling, condensation clearing, a bubble rising, the
// plate warming): an offset of either sign at the first read that decays exponentially,
//   d(t) = d0·exp(−t/τd),  τd = k·Δt/3,
// t from the first read, Δt the read interval, so that k reads (k = 1–3) after the first only
// e⁻³ ≈ 5 % of it is left. k = 1 is a first read that jumps; k = 3 a start that decays.
inline double disturbance_tau(int reads, double interval_s) { return reads * interval_s / 3.0; }
inline double disturbance(double t_s, double d0, double tau_s) { return tau_s > 0 ? d0 * std::exp(-t_s / tau_s) : 0.0; }

// Straight-line windows of a noise-free trace y against a target slope: every run of at
// least `min_reads` consecutive finite values (NaN breaks a run), fitted by ordinary least
// squares (O(n²) with prefix sums).
//   best_bias:  the least |slope/target − 1| of any window (+inf when no run is long enough)
//   first, last, bias, se: the window a straight line should use, knowing the truth — the
//               least bias² + se², se = σ/(target·√Sxx) the slope's relative standard error
//               from read noise σ (σ = 0: the least |bias|, the earliest of equals).
struct LineWindows {
  double best_bias = INFINITY;
  int first = -1, last = -1;
  double bias = INFINITY, se = INFINITY;
};

// `last_end`: the last read a window may end at (a conversion limit; default every read).
inline LineWindows line_windows(const std::vector<double>& t, const std::vector<double>& y, double target,
                                int min_reads, double sigma, std::size_t last_end = SIZE_MAX) {
  const std::size_t n = t.size();
  std::vector<double> st(n + 1, 0), sy(n + 1, 0), stt(n + 1, 0), sty(n + 1, 0);
  std::vector<std::size_t> run_start(n, 0);
  for (std::size_t i = 0; i < n; ++i) {
    // Times from the first read keep the sums well conditioned.
    const double ti = t[i] - t[0];
    const bool ok = std::isfinite(y[i]);
    st[i + 1] = st[i] + (ok ? ti : 0);
    sy[i + 1] = sy[i] + (ok ? y[i] : 0);
    stt[i + 1] = stt[i] + (ok ? ti * ti : 0);
    sty[i + 1] = sty[i] + (ok ? ti * y[i] : 0);
    run_start[i] = !ok ? i + 1 : (i > 0 ? run_start[i - 1] : 0);
  }
  LineWindows w;
  double best_total = INFINITY;
  const auto m = static_cast<std::size_t>(std::max(2, min_reads));
  for (std::size_t j = 0; j < n && j <= last_end; ++j) {
    if (!std::isfinite(y[j])) continue;
    for (std::size_t i = run_start[j]; i + m <= j + 1; ++i) {
      const double k = static_cast<double>(j + 1 - i);
      const double a = st[j + 1] - st[i], b = sy[j + 1] - sy[i];
      const double sxx = (stt[j + 1] - stt[i]) - a * a / k;
      const double sxy = (sty[j + 1] - sty[i]) - a * b / k;
      if (sxx <= 0) continue;
      const double bias = sxy / sxx / target - 1;
      const double se = sigma / (std::fabs(target) * std::sqrt(sxx));
      w.best_bias = std::min(w.best_bias, std::fabs(bias));
      if (bias * bias + se * se < best_total) {
        best_total = bias * bias + se * se;
        w.first = static_cast<int>(i);
        w.last = static_cast<int>(j);
        w.bias = bias;
        w.se = se;
      }
    }
  }
  return w;
}

// The least |slope/target − 1| of any straight-line window (line_windows' best_bias).
inline double line_error_best(const std::vector<double>& t, const std::vector<double>& y, double target,
                              int min_reads) {
  return line_windows(t, y, target, min_reads, 0.0).best_bias;
}

}  // namespace vzero::sim
