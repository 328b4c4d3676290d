// The plate simulator's scenario knobs (PlateSpec), its truth per well (WellTruth), the
// simulated plate (Plate) and the detector models. tests/sim/plate_sim.hpp describes the
// scenario and simulates; include that.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <vector>

#include "sim_physics.hpp"
#include "vzero/run.hpp"

namespace vzero::sim {

// Artefacts a well may carry (bits of WellTruth::artefacts).
enum Artefact : unsigned {
  k_spike = 1,       // one or two bubble spikes
  k_saturated = 2,   // some reads beyond the detector's linear limit (compressed or overflow)
  k_lag = 4,         // a lag before the steady rate (coupling step, or hysteretic onset)
  k_mixing = 8,      // first reads disturbed by mixing (the default scenario's model)
  k_depletion = 16,  // more than half the substrate converted by the last read
  k_turbid = 32,     // starts high (turbid well), so it saturates early
  // Bits below 64 are the default scenario's; the ones above were added with the artefacts
  // off by default, and describe any plate (the accuracy program's default listing masks them).
  k_disturbed = 64,           // a disturbed start: offset of either sign over the first 1–3 reads
  k_blank_disturbed = 128,    // a sample whose matched blank (row) has a disturbed start
  k_early_start = 256,        // substrate used before the first read slowed it below 98 % of v0
  k_short_run = 512,          // 8 reads or fewer
  k_compressed = 1024,        // stray light compresses its slope by more than 5 % at some read
  k_low_signal = 2048,        // under 10 read-noise SDs of product up to 10 % conversion or the last read
  k_strong_depletion = 4096,  // 10 % of S0 converted before the read that completes a shortest window
};
constexpr unsigned k_default_scenario_bits = 63;

enum class Role { sample, blank };

struct WellTruth {
  Role role = Role::sample;
  double s0_uM = 0, km_uM = 0, vmax_uM_s = 0;
  double v0_uM_s = 0;           // enzymatic initial rate at reaction start (0 for blanks)
  double lag_s = 0;             // lag time constant τ, 0 = none
  bool lag_hysteretic = false;  // τ of a hysteretic onset (else of a coupling step)
  unsigned artefacts = 0;
  std::vector<int> spike_reads;     // reads carrying a spike
  std::vector<double> spike_size;   // the spike added at each of them, AU
  int first_saturated_read = -1;    // first read beyond the linear limit, −1 = none
  double conversion_end = 0;        // fraction of S0 converted at the last read
  double disturbance_AU = 0;        // own disturbed start: offset at the first read, AU
  int disturbance_reads = 0;        // reads after which 5 % of it is left
  double disturbance_tau_s = 0;     // its time constant, k·Δt/3 (sim_physics.hpp disturbance)
  double blank_disturbance_AU = 0;  // samples: mean offset of the row's blanks at the first read
  // The noise-free trace the matched blank (the row's blank mean) leaves: the well's reading
  // minus what it would read without enzyme, minus the blanks' disturbance; every
  // deterministic artefact kept, no noise and no spikes; NaN where it overflows. And how
  // close the best straight-line window of at least `measurable_min_reads` reads of it comes
  // to the true v0 (|slope/v0 − 1|). Filled when PlateSpec::judge_measurable.
  std::vector<double> ideal;
  double line_error = INFINITY;
  bool measurable = false;  // line_error ≤ PlateSpec::measurable_within
  // The window a straight line should use, knowing the truth: least bias² + SE² on `ideal`,
  // the SE from the read noise at zero signal of a trace minus its row's blank mean
  // (sim_physics.hpp line_windows); −1 when no window is long enough.
  int oracle_first = -1, oracle_last = -1;
  // The precision that window can reach: the relative 95 % half-width of its slope from the
  // read noise (as above) and the per-well drift (the well's own and its blank mean's) in
  // quadrature. Above a rate finder's precision limit, no method can meet it on this well:
  // the well is noise-limited, and an `imprecise` flag on it is the flag doing its job.
  double ideal_half_width = INFINITY;
  // The same within the conversion limit a rate finder keeps to (PlateSpec::
  // precision_conversion): the best window whose last read has converted at most that
  // fraction of S0 since reaction start. A well whose straight line cannot reach the
  // precision limit without passing the conversion limit is noise-limited under those rules.
  double limited_half_width = INFINITY;
};

// Scenario knobs; the defaults are the scenario described at the top.
struct PlateSpec {
  int rows = 8;
  int sample_columns = 10;
  int blank_columns = 2;
  std::vector<double> s0_over_km = {0.5, 0.75, 1, 1.5, 2, 3, 5, 8};  // per row (cycled)
  std::vector<double> enzyme_levels = {1, 0.6, 0.35, 0.2, 0.12};     // per pair of sample columns
  std::vector<double> read_interval_s = {10, 15, 20, 30};            // one drawn per plate
  double run_min_s = 600, run_max_s = 1800;                          // run length drawn per plate
  double km_min_uM = 50, km_max_uM = 200;                            // log-uniform per plate
  // Assay design: the fastest well (top enzyme, lowest S0) reaches 10 % conversion this many
  // read intervals after the first read, so every well offers a few reads
  // before 10 % while the fast wells still convert most of their substrate by the end.
  double fastest_t10_reads_min = 4, fastest_t10_reads_max = 12;
  double signal_at_km_min = 0.4, signal_at_km_max = 1.2;  // AU when Km of substrate is converted
  double substrate_signal_per_uM = 2e-5;                  // substrate background, AU per µM
  double noise_sd_min = 0.0003, noise_sd_max = 0.0015;    // read noise, AU
  double noise_proportional = 0.001;                      // extra SD per AU of signal
  double baseline_min = 0.04, baseline_max = 0.06;        // well + buffer, AU
  double dead_time_min_s = 5, dead_time_max_s = 30;       // reaction start before first read
  double temperature_drift_max = 0.01;                    // plate-wide drift amplitude, AU
  double well_drift_sd = 5e-7;                            // per-well drift, AU/s
  double nonenzymatic_max_per_s = 2e-6;                   // fraction of S0 hydrolysed per s
  double mixing_probability = 0.15, mixing_sd = 15;       // first-read offset, in noise SDs
  double spike_probability = 0.10, spike_min = 0.02, spike_max = 0.3;
  // Coupling lag time constant; only where it is at most lag_fraction_of_t10 of the well's
  // 10 % conversion time (a coupled assay designed so, as common practice asks).
  double lag_probability = 0.08, lag_min_s = 20, lag_max_s = 90, lag_fraction_of_t10 = 0.25;
  double turbid_probability = 0.04, turbid_min = 1.8, turbid_max = 3.0;
  double linear_limit = 2.5, detector_max = 3.5, overflow_true = 4.0;
  // The linear limit the instrument profile states, which the accuracy program passes to the
  // rate finder as signal_ceiling (the default scenario: the detector's true linear limit).
  double stated_limit = 2.5;

  // --- Further artefacts, off by default (drawn from their own random stream).
  int fixed_reads = 0;  // reads per plate (8: a screening plate); 0 = from the run length
  // Reaction start this many read intervals before the first read, uniform (replaces
  // dead_time_*_s when dead_time_reads_max > 0).
  double dead_time_reads_min = 0, dead_time_reads_max = 0;
  // Low-ε channel (when low_signal_snr_max > 0): the signal scale is set so that 10 % of the
  // lowest S0 converted gives this many read-noise SDs, uniform (replaces signal_at_km_*).
  double low_signal_snr_min = 0, low_signal_snr_max = 0;
  // Disturbed start (sim_physics.hpp `disturbance`): chance per sample well and per blank well
  // (a blank's passes into every sample of its row through the matched blank); |offset| at the
  // first read in read-noise SDs, log-uniform; either sign; gone to 5 % after 1–3 reads.
  double disturb_probability = 0, disturb_blank_probability = 0;
  double disturb_min_sd = 5, disturb_max_sd = 60;
  int disturb_reads_min = 1, disturb_reads_max = 3;
  // Hysteretic onset (sim_physics.hpp `onset_time`): chance per sample well; τ uniform in
  // [onset_min_s, min(onset_max_s, onset_max_run_fraction × run)]; one τ for the whole plate
  // when onset_per_plate (the enzyme's own lag), else one per well.
  double onset_probability = 0, onset_min_s = 20, onset_max_s = 180, onset_max_run_fraction = 1.0 / 3;
  bool onset_per_plate = false;
  // Stray light (when stray_light_max > 0): fraction s per plate, log-uniform; the detector
  // then reads stray_light_absorbance(A, s), at most detector_max (readings beyond it are
  // reported as detector_max), and overflow past overflow_true, instead of the tanh model.
  double stray_light_min = 0, stray_light_max = 0;
  // The truth's "measurable" judgement (WellTruth::ideal, line_error, measurable): windows of
  // at least measurable_min_reads reads (the rate finder's default min_points), within
  // measurable_within of v0. O(reads²) per well; benchmarks of big plates turn it off.
  bool judge_measurable = true;
  int measurable_min_reads = 5;
  double measurable_within = 0.05;
  // The conversion limit of WellTruth::limited_half_width: the rate finder's default
  // max_conversion (10 %).
  double precision_conversion = 0.1;
};

struct Plate {
  int rows = 0, columns = 0;
  std::vector<double> time_s;
  double signal_per_uM = 0;  // AU per µM of product: rate_uM_s = slope_AU_s / signal_per_uM
  double noise_sd = 0;       // read noise SD (AU) at zero signal
  double read_interval_s = 0, dead_time_s = 0;
  double stray_light = 0;                       // fraction s, 0 = the tanh detector
  std::vector<std::vector<double>> signal;      // [well][read]; NaN where status is not ok
  std::vector<std::vector<ReadStatus>> status;  // [well][read]
  std::vector<WellTruth> truth;                 // [well], row-major (A1, A2, …)
};

namespace detail {

// Detector response: linear up to the limit, then compressing towards detector_max.
inline double detector(double a, const PlateSpec& s) {
  if (a <= s.linear_limit) return a;
  const double room = s.detector_max - s.linear_limit;
  return s.linear_limit + room * std::tanh((a - s.linear_limit) / room);
}

// The reading for a true absorbance a: the tanh model, or stray light up to the maximum.
inline double reading(double a, const PlateSpec& s, double stray) {
  if (stray <= 0) return detector(a, s);
  return std::min(stray_light_absorbance(a, stray), s.detector_max);
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

// Plate-wide draws shared by every well.
struct PlateDraws {
  double run_s = 0, km = 0, vmax_top = 0, drift_amp = 0, k_ne = 0, onset_tau_s = 0;
};

}  // namespace detail
}  // namespace vzero::sim
