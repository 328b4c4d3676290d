// A plate simulator with a known truth, for the rate finder's accuracy harness, benchmarks
// and property tests. Header-only; depends only on the data model's ReadStatus.
//
// Progress curves follow the integrated Michaelis–Menten equation in the closed form of
// Schnell & Mendoza (1997, J. theor. Biol. 187, 207–212):
//   S(t) = Km·W((S0/Km)·exp((S0 − Vmax·t)/Km)),  P(t) = S0 − S(t),
// W the principal branch of the Lambert W function, evaluated in log space (w + ln w = L) so
// that arguments beyond the double range (e.g. exp(806.9)) still work. The true initial rate
// is v0 = Vmax·S0/(Km + S0).
//
// The default scenario is invented for these tests: a chromogenic hydrolase assay read as
// absorbance on a 96-well plate. Rows A–H hold a substrate series S0 = Km·{0.5 … 8}; columns
// 1–10 hold five enzyme levels in duplicate; columns 11–12 hold substrate-only blanks. On top
// of the chemistry: read noise, a plate-wide temperature drift, a small per-well drift,
// non-enzymatic hydrolysis (in blanks too), the reaction starting a few seconds before the
// first read (mixing dead time), disturbed first reads, coupling lags, bubble spikes and a
// detector that compresses above its linear limit and overflows beyond it (some wells are
// turbid, starting high). Every random draw comes from std::mt19937_64 (whose output
// sequence the C++ standard fixes) through this file's own uniform and Box–Muller normal
// transforms, so a seed gives the same plate with every compiler and library.
//
// **Example**:
//   vzero::sim::Plate p = vzero::sim::simulate_plate(vzero::sim::PlateSpec{}, 42);
//   // p.signal[w][i] at p.time_s[i]; p.truth[w].v0_uM_s; p.signal_per_uM converts
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <random>
#include <vector>

#include "vzero/run.hpp"

namespace vzero::sim {

// Seedable random numbers with fixed algorithms.
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

// Product formed at time t (same time unit as vmax), Schnell & Mendoza closed form; 0 for t ≤ 0.
inline double mm_product(double t, double s0, double km, double vmax) {
  if (t <= 0) return 0.0;
  const double L = std::log(s0 / km) + (s0 - vmax * t) / km;
  return s0 - km * lambert_w0_exp(L);
}

inline double mm_v0(double s0, double km, double vmax) { return vmax * s0 / (km + s0); }

// Artefacts a well may carry (bit set in WellTruth::artefacts).
enum Artefact : unsigned {
  k_spike = 1,       // one or two bubble spikes
  k_saturated = 2,   // some reads beyond the detector's linear limit (compressed or overflow)
  k_lag = 4,         // coupling lag before the steady rate
  k_mixing = 8,      // first reads disturbed by mixing
  k_depletion = 16,  // more than half the substrate converted by the last read
  k_turbid = 32,     // starts high (turbid well), so it saturates early
};

enum class Role { sample, blank };

struct WellTruth {
  Role role = Role::sample;
  double s0_uM = 0, km_uM = 0, vmax_uM_s = 0;
  double v0_uM_s = 0;          // enzymatic initial rate (0 for blanks)
  double lag_s = 0;            // coupling time constant, 0 = none
  unsigned artefacts = 0;
  std::vector<int> spike_reads;  // reads carrying a spike
  std::vector<double> spike_size; // the spike added at each of them, AU
  int first_saturated_read = -1; // first read beyond the linear limit, −1 = none
  double conversion_end = 0;     // fraction of S0 converted at the last read
};

// Scenario knobs; the defaults are the scenario described at the top.
struct PlateSpec {
  int rows = 8;
  int sample_columns = 10;
  int blank_columns = 2;
  std::vector<double> s0_over_km = {0.5, 0.75, 1, 1.5, 2, 3, 5, 8};  // per row (cycled)
  std::vector<double> enzyme_levels = {1, 0.6, 0.35, 0.2, 0.12};     // per pair of sample columns
  std::vector<double> read_interval_s = {10, 15, 20, 30};          // one drawn per plate
  double run_min_s = 600, run_max_s = 1800;                        // run length drawn per plate
  double km_min_uM = 50, km_max_uM = 200;                          // log-uniform per plate
  // Assay design: the fastest well (top enzyme, lowest S0) reaches 10 % conversion this many
  // read intervals after the first read, so every well offers a few reads
  // before 10 % while the fast wells still convert most of their substrate by the end.
  double fastest_t10_reads_min = 4, fastest_t10_reads_max = 12;
  double signal_at_km_min = 0.4, signal_at_km_max = 1.2;           // AU when Km of substrate is converted
  double substrate_signal_per_uM = 2e-5;                           // substrate background, AU per µM
  double noise_sd_min = 0.0003, noise_sd_max = 0.0015;              // read noise, AU
  double noise_proportional = 0.001;                               // extra SD per AU of signal
  double baseline_min = 0.04, baseline_max = 0.06;                 // well + buffer, AU
  double dead_time_min_s = 5, dead_time_max_s = 30;                // reaction start before first read
  double temperature_drift_max = 0.01;                             // plate-wide drift amplitude, AU
  double well_drift_sd = 5e-7;                                     // per-well drift, AU/s
  double nonenzymatic_max_per_s = 2e-6;                            // fraction of S0 hydrolysed per s
  double mixing_probability = 0.15, mixing_sd = 15;                // first-read offset, in noise SDs
  double spike_probability = 0.10, spike_min = 0.02, spike_max = 0.3;
  // Coupling lag time constant; only where it is at most lag_fraction_of_t10 of the well's
  // 10 % conversion time (a coupled assay designed so, as common practice asks).
  double lag_probability = 0.08, lag_min_s = 20, lag_max_s = 90, lag_fraction_of_t10 = 0.25;
  double turbid_probability = 0.04, turbid_min = 1.8, turbid_max = 3.0;
  double linear_limit = 2.5, detector_max = 3.5, overflow_true = 4.0;
};

struct Plate {
  int rows = 0, columns = 0;
  std::vector<double> time_s;
  double signal_per_uM = 0;  // AU per µM of product: rate_uM_s = slope_AU_s / signal_per_uM
  double noise_sd = 0;       // read noise SD (AU) at zero signal
  double read_interval_s = 0, dead_time_s = 0;
  std::vector<std::vector<double>> signal;            // [well][read]; NaN where status is not ok
  std::vector<std::vector<ReadStatus>> status;        // [well][read]
  std::vector<WellTruth> truth;                       // [well], row-major (A1, A2, …)
};

namespace detail {

// Detector response: linear up to the limit, then compressing towards detector_max.
inline double detector(double a, const PlateSpec& s) {
  if (a <= s.linear_limit) return a;
  const double room = s.detector_max - s.linear_limit;
  return s.linear_limit + room * std::tanh((a - s.linear_limit) / room);
}

// Observed product through a first-order coupling step of time constant tau, advanced read
// by read: exact for P piecewise linear over 0.25 s steps, starting at reaction time 0.
class LaggedProduct {
 public:
  LaggedProduct(double tau, double s0, double km, double vmax) : tau_(tau), s0_(s0), km_(km), vmax_(vmax) {}
  double at(double t_react) {
    if (tau_ <= 0) return mm_product(t_react, s0_, km_, vmax_);
    while (t_ < t_react) {
      const double step = std::min(0.25, t_react - t_);
      const double p = mm_product(t_ + step, s0_, km_, vmax_);
      const double r = (p - p_) / step;
      q_ = p - r * tau_ + (q_ - p_ + r * tau_) * std::exp(-step / tau_);
      p_ = p;
      t_ += step;
    }
    return q_;
  }

 private:
  double tau_, s0_, km_, vmax_;
  double q_ = 0, p_ = 0, t_ = 0;
};

}  // namespace detail

inline Plate simulate_plate(const PlateSpec& spec, std::uint64_t seed) {
  Rng rng(seed);
  Rng spike_rng(seed ^ 0x9e3779b97f4a7c15ULL);
  Plate plate;
  plate.rows = spec.rows;
  plate.columns = spec.sample_columns + spec.blank_columns;
  plate.read_interval_s = spec.read_interval_s[static_cast<std::size_t>(
      rng.integer(0, static_cast<int>(spec.read_interval_s.size()) - 1))];
  const double run_s = rng.uniform(spec.run_min_s, spec.run_max_s);
  const int reads = static_cast<int>(run_s / plate.read_interval_s) + 1;
  for (int i = 0; i < reads; ++i) plate.time_s.push_back(i * plate.read_interval_s);
  const double km = rng.log_uniform(spec.km_min_uM, spec.km_max_uM);
  // t10 = (0.1·S0 + Km·ln(1/0.9))/Vmax from the integrated equation.
  const double s0_low = km * *std::min_element(spec.s0_over_km.begin(), spec.s0_over_km.end());
  const double level_top = *std::max_element(spec.enzyme_levels.begin(), spec.enzyme_levels.end());
  plate.dead_time_s = rng.uniform(spec.dead_time_min_s, spec.dead_time_max_s);
  const double t10_fastest =
      plate.dead_time_s + rng.uniform(spec.fastest_t10_reads_min, spec.fastest_t10_reads_max) * plate.read_interval_s;
  const double vmax_top = (0.1 * s0_low + km * std::log(1 / 0.9)) / t10_fastest / level_top;
  plate.signal_per_uM = rng.uniform(spec.signal_at_km_min, spec.signal_at_km_max) / km;
  plate.noise_sd = rng.uniform(spec.noise_sd_min, spec.noise_sd_max);
  const double drift_amp = rng.uniform(-spec.temperature_drift_max, spec.temperature_drift_max);
  const double k_ne = rng.uniform(0, spec.nonenzymatic_max_per_s);
  const double g = plate.signal_per_uM;

  const int wells = plate.rows * plate.columns;
  plate.signal.assign(static_cast<std::size_t>(wells), std::vector<double>(static_cast<std::size_t>(reads)));
  plate.status.assign(static_cast<std::size_t>(wells), std::vector<ReadStatus>(static_cast<std::size_t>(reads), ReadStatus::ok));
  plate.truth.resize(static_cast<std::size_t>(wells));
  for (int w = 0; w < wells; ++w) {
    const int row = w / plate.columns, col = w % plate.columns;
    WellTruth& tr = plate.truth[static_cast<std::size_t>(w)];
    tr.role = col < spec.sample_columns ? Role::sample : Role::blank;
    tr.km_uM = km;
    tr.s0_uM = km * spec.s0_over_km[static_cast<std::size_t>(row) % spec.s0_over_km.size()];
    const double level = spec.enzyme_levels[static_cast<std::size_t>(col / 2) % spec.enzyme_levels.size()];
    tr.vmax_uM_s = tr.role == Role::sample ? vmax_top * level : 0.0;
    tr.v0_uM_s = mm_v0(tr.s0_uM, km, tr.vmax_uM_s);
    double base = rng.uniform(spec.baseline_min, spec.baseline_max) + spec.substrate_signal_per_uM * tr.s0_uM;
    const double well_drift = spec.well_drift_sd * rng.normal();
    double mixing = 0;
    if (tr.role == Role::sample) {
      const double t10 = (0.1 * tr.s0_uM + km * std::log(1 / 0.9)) / tr.vmax_uM_s;
      if (rng.chance(spec.lag_probability)) {
        const double tau = rng.uniform(spec.lag_min_s, spec.lag_max_s);
        if (tau <= spec.lag_fraction_of_t10 * t10) { tr.lag_s = tau; tr.artefacts |= k_lag; }
      }
      if (rng.chance(spec.turbid_probability)) { base += rng.uniform(spec.turbid_min, spec.turbid_max); tr.artefacts |= k_turbid; }
      if (rng.chance(spec.mixing_probability)) { mixing = spec.mixing_sd * plate.noise_sd * rng.normal(); tr.artefacts |= k_mixing; }
      // Spikes draw from their own stream, so a plate simulated with spike_probability = 0
      // is the same plate without its spikes (a twin to compare against).
      if (spike_rng.chance(spec.spike_probability)) {
        const int count = spike_rng.chance(0.3) ? 2 : 1;
        for (int k = 0; k < count; ++k) {
          tr.spike_reads.push_back(spike_rng.integer(0, reads - 1));
          tr.spike_size.push_back((spike_rng.chance(0.8) ? 1 : -1) * spike_rng.uniform(spec.spike_min, spec.spike_max));
        }
        tr.artefacts |= k_spike;
      }
    }
    detail::LaggedProduct product(tr.lag_s, tr.s0_uM, km, tr.vmax_uM_s);
    for (int i = 0; i < reads; ++i) {
      const double t = plate.time_s[static_cast<std::size_t>(i)];
      const double t_react = t + plate.dead_time_s;
      const double p = tr.role == Role::sample ? product.at(t_react) : 0.0;
      const double ne = tr.s0_uM * -std::expm1(-k_ne * t_react);
      double a = base + g * (p + ne) + drift_amp * -std::expm1(-t / 200.0) + well_drift * t;
      if (a > spec.linear_limit && tr.first_saturated_read < 0) { tr.first_saturated_read = i; tr.artefacts |= k_saturated; }
      a += mixing * std::exp(-t / (0.5 * plate.read_interval_s));
      for (std::size_t k = 0; k < tr.spike_reads.size(); ++k)
        if (tr.spike_reads[k] == i) a += tr.spike_size[k];
      const double sd = std::hypot(plate.noise_sd, spec.noise_proportional * a);
      a += sd * rng.normal();
      if (a >= spec.overflow_true) {
        plate.status[static_cast<std::size_t>(w)][static_cast<std::size_t>(i)] = ReadStatus::overflow;
        plate.signal[static_cast<std::size_t>(w)][static_cast<std::size_t>(i)] = NAN;
      } else {
        plate.signal[static_cast<std::size_t>(w)][static_cast<std::size_t>(i)] = detail::detector(a, spec);
      }
      if (i == reads - 1) tr.conversion_end = tr.s0_uM > 0 ? p / tr.s0_uM : 0;
    }
    if (tr.conversion_end > 0.5) tr.artefacts |= k_depletion;
  }
  return plate;
}

}  // namespace vzero::sim
