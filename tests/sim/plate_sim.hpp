// A plate simulator with a known truth, for the rate finder's accuracy harness, benchmarks
// and property tests. Header-only; depends only on the data model's ReadStatus and on
// sim_physics.hpp (the closed forms, each checked by hand in tests/sim_test.cpp).
//
// Progress curves follow the integrated Michaelis–Menten equation (Lambert W closed form,
// sim_physics.hpp). The true initial rate is v0 = Vmax·S0/(Km + S0), at reaction start.
//
// The default scenario is invented for these tests: a chromogenic hydrolase assay read as
// absorbance on a 96-well plate. Rows A–H hold a substrate series S0 = Km·{0.5 … 8}; columns
// 1–10 hold five enzyme levels in duplicate; columns 11–12 hold substrate-only blanks, the
// matched blanks of their row's substrate level. On top of the chemistry: read noise, a
// plate-wide temperature drift, a small per-well drift, non-enzymatic hydrolysis (in blanks
// too), the reaction starting a few seconds before the first read (mixing dead time),
// disturbed first reads, coupling lags, bubble spikes and a detector that compresses above
// its linear limit and overflows beyond it (some wells are turbid, starting high).
//
// Further artefacts, all off by default (PlateSpec{} gives the same plates, draw for draw, as
// before they existed; their draws come from a random stream of their own): screening plates
// of 8 reads, a reaction started reads before the first read, a low-ε channel, disturbed
// starts of either sign over 1–3 reads in samples and in matched blanks, hysteretic lags
// of τ up to a third of the run, and a photometer with stray light whose readings compress
// towards ~3 AU, stay at the detector maximum, then overflow. tests/sim/plate_mix.hpp mixes
// them into the accuracy program's plates.
//
// Every random draw comes from sim::Rng (fixed algorithms), so a seed gives the same plate
// with every compiler and library.
//
// **Example**:
//   vzero::sim::Plate p = vzero::sim::simulate_plate(vzero::sim::PlateSpec{}, 42);
//   // p.signal[w][i] at p.time_s[i]; p.truth[w].v0_uM_s; p.signal_per_uM converts
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <vector>

#include "plate_spec.hpp"
#include "sim_physics.hpp"

namespace vzero::sim {
namespace detail {

inline double draw_onset_tau(const PlateSpec& spec, Rng& extra, double run_s) {
  return extra.uniform(spec.onset_min_s, std::min(spec.onset_max_s, spec.onset_max_run_fraction * run_s));
}

// The plate-wide draws: read schedule, Km, assay design, signal scale, noise, drift. The main
// stream's draws are those of the default scenario, in its order; the further artefacts draw
// from `extra` only.
inline PlateDraws draw_plate(const PlateSpec& spec, Rng& rng, Rng& extra, Plate& plate) {
  PlateDraws d;
  plate.rows = spec.rows;
  plate.columns = spec.sample_columns + spec.blank_columns;
  plate.read_interval_s =
      spec.read_interval_s[static_cast<std::size_t>(rng.integer(0, static_cast<int>(spec.read_interval_s.size()) - 1))];
  d.run_s = rng.uniform(spec.run_min_s, spec.run_max_s);
  int reads = static_cast<int>(d.run_s / plate.read_interval_s) + 1;
  if (spec.fixed_reads > 0) {
    reads = spec.fixed_reads;
    d.run_s = (reads - 1) * plate.read_interval_s;
  }
  for (int i = 0; i < reads; ++i) plate.time_s.push_back(i * plate.read_interval_s);
  d.km = rng.log_uniform(spec.km_min_uM, spec.km_max_uM);
  // t10 = (0.1·S0 + Km·ln(1/0.9))/Vmax from the integrated equation.
  const double s0_low = d.km * *std::min_element(spec.s0_over_km.begin(), spec.s0_over_km.end());
  const double level_top = *std::max_element(spec.enzyme_levels.begin(), spec.enzyme_levels.end());
  plate.dead_time_s = rng.uniform(spec.dead_time_min_s, spec.dead_time_max_s);
  // The assay is designed for the planned dead time; a late start (dead_time_reads_*) is a
  // handling accident that does not change the enzyme dose.
  const double t10_fastest =
      plate.dead_time_s + rng.uniform(spec.fastest_t10_reads_min, spec.fastest_t10_reads_max) * plate.read_interval_s;
  if (spec.dead_time_reads_max > 0)
    plate.dead_time_s = extra.uniform(spec.dead_time_reads_min, spec.dead_time_reads_max) * plate.read_interval_s;
  d.vmax_top = (0.1 * s0_low + d.km * std::log(1 / 0.9)) / t10_fastest / level_top;
  plate.signal_per_uM = rng.uniform(spec.signal_at_km_min, spec.signal_at_km_max) / d.km;
  plate.noise_sd = rng.uniform(spec.noise_sd_min, spec.noise_sd_max);
  if (spec.low_signal_snr_max > 0)
    plate.signal_per_uM =
        extra.uniform(spec.low_signal_snr_min, spec.low_signal_snr_max) * plate.noise_sd / (0.1 * s0_low);
  d.drift_amp = rng.uniform(-spec.temperature_drift_max, spec.temperature_drift_max);
  d.k_ne = rng.uniform(0, spec.nonenzymatic_max_per_s);
  if (spec.stray_light_max > 0) plate.stray_light = extra.log_uniform(spec.stray_light_min, spec.stray_light_max);
  if (spec.onset_per_plate) d.onset_tau_s = draw_onset_tau(spec, extra, d.run_s);
  return d;
}

// One well's own draws (besides read noise).
struct WellDraws {
  double base = 0, well_drift = 0, mixing = 0;
};

inline WellDraws draw_well(const PlateSpec& spec, const Plate& plate, const PlateDraws& d, int w, Rng& rng,
                           Rng& spike_rng, Rng& extra, WellTruth& tr) {
  const int reads = static_cast<int>(plate.time_s.size());
  const int row = w / plate.columns, col = w % plate.columns;
  tr.role = col < spec.sample_columns ? Role::sample : Role::blank;
  tr.km_uM = d.km;
  tr.s0_uM = d.km * spec.s0_over_km[static_cast<std::size_t>(row) % spec.s0_over_km.size()];
  const double level = spec.enzyme_levels[static_cast<std::size_t>(col / 2) % spec.enzyme_levels.size()];
  tr.vmax_uM_s = tr.role == Role::sample ? d.vmax_top * level : 0.0;
  tr.v0_uM_s = mm_v0(tr.s0_uM, d.km, tr.vmax_uM_s);
  WellDraws wd;
  wd.base = rng.uniform(spec.baseline_min, spec.baseline_max) + spec.substrate_signal_per_uM * tr.s0_uM;
  wd.well_drift = spec.well_drift_sd * rng.normal();
  if (tr.role == Role::sample) {
    const double t10 = (0.1 * tr.s0_uM + d.km * std::log(1 / 0.9)) / tr.vmax_uM_s;
    if (rng.chance(spec.lag_probability)) {
      const double tau = rng.uniform(spec.lag_min_s, spec.lag_max_s);
      if (tau <= spec.lag_fraction_of_t10 * t10) {
        tr.lag_s = tau;
        tr.artefacts |= k_lag;
      }
    }
    if (rng.chance(spec.turbid_probability)) {
      wd.base += rng.uniform(spec.turbid_min, spec.turbid_max);
      tr.artefacts |= k_turbid;
    }
    if (rng.chance(spec.mixing_probability)) {
      wd.mixing = spec.mixing_sd * plate.noise_sd * rng.normal();
      tr.artefacts |= k_mixing;
    }
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
  if (extra.chance(tr.role == Role::sample ? spec.disturb_probability : spec.disturb_blank_probability)) {
    tr.disturbance_reads = extra.integer(spec.disturb_reads_min, spec.disturb_reads_max);
    const double size = extra.log_uniform(spec.disturb_min_sd, spec.disturb_max_sd) * plate.noise_sd;
    tr.disturbance_AU = extra.chance(0.5) ? size : -size;
    tr.disturbance_tau_s = disturbance_tau(tr.disturbance_reads, plate.read_interval_s);
    tr.artefacts |= k_disturbed;
  }
  if (tr.role == Role::sample && extra.chance(spec.onset_probability)) {
    tr.lag_s = spec.onset_per_plate ? d.onset_tau_s : draw_onset_tau(spec, extra, d.run_s);
    tr.lag_hysteretic = true;
    tr.artefacts |= k_lag;
  }
  return wd;
}

// Substrate actually converted by reaction time t (a coupling step delays the signal only).
inline double converted(const WellTruth& tr, double t_react) {
  return mm_product(onset_time(t_react, tr.lag_hysteretic ? tr.lag_s : 0.0), tr.s0_uM, tr.km_uM, tr.vmax_uM_s);
}

// The reads of one well: chemistry, drift, artefacts, noise, detector. Fills the truth's
// noise-free trace when the spec asks for the measurable judgement.
inline void simulate_reads(const PlateSpec& spec, const PlateDraws& d, const WellDraws& wd, int w, Rng& rng,
                           Plate& plate) {
  const auto uw = static_cast<std::size_t>(w);
  WellTruth& tr = plate.truth[uw];
  const std::size_t reads = plate.time_s.size();
  const double g = plate.signal_per_uM;
  LaggedProduct coupled(tr.lag_hysteretic ? 0.0 : tr.lag_s, tr.s0_uM, tr.km_uM, tr.vmax_uM_s);
  if (spec.judge_measurable) tr.ideal.assign(reads, NAN);
  const double compress_from = plate.stray_light > 0 ? stray_light_onset(plate.stray_light, 0.05) : INFINITY;
  for (std::size_t i = 0; i < reads; ++i) {
    const double t = plate.time_s[i];
    const double t_react = t + plate.dead_time_s;
    const double p = tr.role != Role::sample ? 0.0 : tr.lag_hysteretic ? converted(tr, t_react) : coupled.at(t_react);
    const double ne = tr.s0_uM * -std::expm1(-d.k_ne * t_react);
    double a = wd.base + g * (p + ne) + d.drift_amp * -std::expm1(-t / 200.0) + wd.well_drift * t;
    if (a > spec.linear_limit && tr.first_saturated_read < 0) {
      tr.first_saturated_read = static_cast<int>(i);
      tr.artefacts |= k_saturated;
    }
    a += wd.mixing * std::exp(-t / (0.5 * plate.read_interval_s));
    a += disturbance(t, tr.disturbance_AU, tr.disturbance_tau_s);
    if (tr.role == Role::sample && a > compress_from) tr.artefacts |= k_compressed;
    if (spec.judge_measurable && a < spec.overflow_true) {
      const double ref = wd.base + g * ne + d.drift_amp * -std::expm1(-t / 200.0) + wd.well_drift * t;
      tr.ideal[i] = reading(a, spec, plate.stray_light) - reading(ref, spec, plate.stray_light);
    }
    for (std::size_t k = 0; k < tr.spike_reads.size(); ++k)
      if (tr.spike_reads[k] == static_cast<int>(i)) a += tr.spike_size[k];
    const double sd = std::hypot(plate.noise_sd, spec.noise_proportional * a);
    a += sd * rng.normal();
    if (a >= spec.overflow_true) {
      plate.status[uw][i] = ReadStatus::overflow;
      plate.signal[uw][i] = NAN;
    } else {
      plate.signal[uw][i] = reading(a, spec, plate.stray_light);
    }
    if (i == reads - 1) tr.conversion_end = tr.s0_uM > 0 ? p / tr.s0_uM : 0;
  }
  if (tr.conversion_end > 0.5) tr.artefacts |= k_depletion;
}

// The truth's judgements of a sample well that need its whole trace.
inline void judge_well(const PlateSpec& spec, const Plate& plate, WellTruth& tr) {
  if (tr.role != Role::sample) return;
  const std::size_t reads = plate.time_s.size();
  // Rate at the first read against v0, from the substrate used before it.
  const double s1 = tr.s0_uM - converted(tr, plate.dead_time_s);
  if ((s1 / (tr.km_uM + s1)) / (tr.s0_uM / (tr.km_uM + tr.s0_uM)) < 0.98) tr.artefacts |= k_early_start;
  const std::size_t m = std::min(reads, static_cast<std::size_t>(std::max(1, spec.measurable_min_reads)));
  if (converted(tr, plate.time_s[m - 1] + plate.dead_time_s) >= 0.1 * tr.s0_uM) tr.artefacts |= k_strong_depletion;
  // Low signal: the product a window may hold (up to 10 % conversion, or all of the run's)
  // reads as fewer than 10 read-noise SDs.
  const double within = std::min(0.1 * tr.s0_uM, converted(tr, plate.time_s[reads - 1] + plate.dead_time_s));
  if (within * plate.signal_per_uM < 10 * plate.noise_sd) tr.artefacts |= k_low_signal;
  if (reads <= 8) tr.artefacts |= k_short_run;
  if (spec.judge_measurable) {
    const double sigma = plate.noise_sd * std::sqrt(1.0 + 1.0 / std::max(1, spec.blank_columns));
    const LineWindows lw =
        line_windows(plate.time_s, tr.ideal, tr.v0_uM_s * plate.signal_per_uM, spec.measurable_min_reads, sigma);
    tr.line_error = lw.best_bias;
    tr.measurable = tr.line_error <= spec.measurable_within;
    tr.oracle_first = lw.first;
    tr.oracle_last = lw.last;
    const double drift = spec.well_drift_sd * std::sqrt(1.0 + 1.0 / std::max(1, spec.blank_columns)) /
                         std::fabs(tr.v0_uM_s * plate.signal_per_uM);
    if (lw.first >= 0) tr.ideal_half_width = 1.959963984540054 * std::hypot(lw.se, drift);
    // Within the conversion limit: the windows that end by the last read at which at most
    // precision_conversion of S0 is converted since reaction start (every read when none is).
    std::size_t last_end = 0;
    while (last_end + 1 < reads &&
           converted(tr, plate.time_s[last_end + 1] + plate.dead_time_s) <= spec.precision_conversion * tr.s0_uM)
      ++last_end;
    const LineWindows lim = line_windows(plate.time_s, tr.ideal, tr.v0_uM_s * plate.signal_per_uM,
                                         spec.measurable_min_reads, sigma, last_end);
    tr.limited_half_width = lim.first >= 0 ? 1.959963984540054 * std::hypot(lim.se, drift) : tr.ideal_half_width;
  }
}

// Matched blanks: every sample subtracts the mean of its row's blanks, so a disturbed blank
// passes its disturbance (divided by the row's blank count) into every sample of the row,
// and into the sample's noise-free trace.
inline void mark_matched_blanks(Plate& plate) {
  for (int row = 0; row < plate.rows; ++row) {
    std::vector<const WellTruth*> blanks;
    double sum = 0;
    for (int col = 0; col < plate.columns; ++col) {
      const WellTruth& b = plate.truth[static_cast<std::size_t>(row * plate.columns + col)];
      if (b.role != Role::blank) continue;
      blanks.push_back(&b);
      sum += b.disturbance_AU;
    }
    if (blanks.empty() || sum == 0) continue;
    const double n = static_cast<double>(blanks.size());
    for (int col = 0; col < plate.columns; ++col) {
      WellTruth& s = plate.truth[static_cast<std::size_t>(row * plate.columns + col)];
      if (s.role != Role::sample) continue;
      s.blank_disturbance_AU = sum / n;
      s.artefacts |= k_blank_disturbed;
      for (std::size_t i = 0; i < s.ideal.size(); ++i)
        for (const WellTruth* b : blanks)
          s.ideal[i] -= disturbance(plate.time_s[i], b->disturbance_AU, b->disturbance_tau_s) / n;
    }
  }
}

}  // namespace detail

inline Plate simulate_plate(const PlateSpec& spec, std::uint64_t seed) {
  Rng rng(seed);
  Rng spike_rng(seed ^ 0x9e3779b97f4a7c15ULL);
  Rng extra(seed ^ 0xd1b54a32d192ed03ULL);  // the further artefacts' own stream
  Plate plate;
  const detail::PlateDraws d = detail::draw_plate(spec, rng, extra, plate);
  const std::size_t reads = plate.time_s.size();
  const int wells = plate.rows * plate.columns;
  plate.signal.assign(static_cast<std::size_t>(wells), std::vector<double>(reads));
  plate.status.assign(static_cast<std::size_t>(wells), std::vector<ReadStatus>(reads, ReadStatus::ok));
  plate.truth.resize(static_cast<std::size_t>(wells));
  for (int w = 0; w < wells; ++w) {
    WellTruth& tr = plate.truth[static_cast<std::size_t>(w)];
    const detail::WellDraws wd = detail::draw_well(spec, plate, d, w, rng, spike_rng, extra, tr);
    detail::simulate_reads(spec, d, wd, w, rng, plate);
  }
  detail::mark_matched_blanks(plate);
  for (auto& tr : plate.truth) detail::judge_well(spec, plate, tr);
  return plate;
}

}  // namespace vzero::sim
