// The accuracy program's scenario mix: plates of seven kinds, each a PlateSpec, with the
// further artefacts of tests/sim/plate_sim.hpp on top of the default scenario. Invented, as a
// picture of what real plates bring; the numbers are the author's judgement of common
// practice, not measurements.
//
// Every plate (all kinds):
//   disturbed start in 12 % of sample wells and 10 % of blank wells (5–60 read-noise SDs,
//     either sign, gone to 5 % after 1–3 reads; a blank's passes into its row's samples),
//   hysteretic lag in 5 % of sample wells (τ 20–180 s, at most a third of the run),
//   bubble spikes in 5 %, turbid (high-starting, 1.8–3.0 AU) 3 % of sample wells,
//   a photometer with a little stray light (s = 5·10⁻⁵ … 2·10⁻⁴),
//   otherwise the default scenario (its own mixing and coupling-lag models off).
// Kinds, by seed modulo 10 (so any 10 consecutive seeds hold each kind in this proportion):
//   0–2 standard         96 wells, 10–30 min at 10–30 s
//   3–4 screening8       384 wells (16 × 22 samples + 2 blanks), 8 reads every 30/45/60 s,
//                        fastest well at 10 % after 2–6 reads, read noise × 1.5
//   5   low-signal       a low-ε channel: 10 % of the lowest S0 is 2–6 read-noise SDs
//   6   high-absorbance  stray light s = 2·10⁻⁴ … 10⁻³ (readings compress towards 3.0–3.7
//                        AU; 10 % slope loss from 2.0–2.7 AU), readings stop at the detector
//                        maximum 3.0 AU, overflow past 3.6 AU true; the profile states the
//                        data sheet's range, 3.0 AU, as the linear limit; a strong chromophore
//                        (1.0–2.5 AU per Km converted); 30 % of sample wells start high
//                        (turbid, 1.2–2.8 AU)
//   7   depleting        fastest well at 10 % conversion after 1–3 reads
//   8   late-start       the reaction started 2–6 read intervals before the first read
//   9   slow-onset       every sample well lags, one τ per plate (20–180 s, ≤ a third of the run)
//
// **Example**:
//   const auto kind = vzero::sim::kind_for_seed(9001);
//   vzero::sim::Plate p = vzero::sim::simulate_plate(vzero::sim::mix_spec(kind), 9001);
#pragma once

#include <array>
#include <cstdint>
#include <string_view>

#include "plate_sim.hpp"

namespace vzero::sim {

enum class PlateKind { standard, screening8, low_signal, high_absorbance, depleting, late_start, slow_onset };
constexpr std::array<PlateKind, 7> k_plate_kinds = {
    PlateKind::standard,  PlateKind::screening8, PlateKind::low_signal, PlateKind::high_absorbance,
    PlateKind::depleting, PlateKind::late_start, PlateKind::slow_onset};

inline std::string_view to_string(PlateKind k) {
  switch (k) {
    case PlateKind::standard:
      return "standard";
    case PlateKind::screening8:
      return "screening8";
    case PlateKind::low_signal:
      return "low-signal";
    case PlateKind::high_absorbance:
      return "high-absorbance";
    case PlateKind::depleting:
      return "depleting";
    case PlateKind::late_start:
      return "late-start";
    case PlateKind::slow_onset:
      return "slow-onset";
  }
  return "?";
}

inline PlateKind kind_for_seed(std::uint64_t seed) {
  constexpr std::array<PlateKind, 10> cycle = {PlateKind::standard,        PlateKind::standard,   PlateKind::standard,
                                               PlateKind::screening8,      PlateKind::screening8, PlateKind::low_signal,
                                               PlateKind::high_absorbance, PlateKind::depleting,  PlateKind::late_start,
                                               PlateKind::slow_onset};
  return cycle[seed % 10];
}

inline PlateSpec mix_spec(PlateKind kind) {
  PlateSpec s;
  s.mixing_probability = 0;  // replaced by the disturbed start below
  s.lag_probability = 0;     // replaced by the hysteretic onset below
  s.disturb_probability = 0.12;
  s.disturb_blank_probability = 0.10;
  s.onset_probability = 0.05;
  s.spike_probability = 0.05;
  s.turbid_probability = 0.03;
  s.stray_light_min = 5e-5;
  s.stray_light_max = 2e-4;
  switch (kind) {
    case PlateKind::standard:
      break;
    case PlateKind::screening8:
      s.rows = 16;
      s.sample_columns = 22;
      s.blank_columns = 2;
      s.fixed_reads = 8;
      s.read_interval_s = {30, 45, 60};
      s.fastest_t10_reads_min = 2;
      s.fastest_t10_reads_max = 6;
      s.noise_sd_min *= 1.5;
      s.noise_sd_max *= 1.5;
      break;
    case PlateKind::low_signal:
      s.low_signal_snr_min = 2;
      s.low_signal_snr_max = 6;
      break;
    case PlateKind::high_absorbance:
      s.stray_light_min = 2e-4;
      s.stray_light_max = 1e-3;
      s.detector_max = 3.0;
      s.overflow_true = 3.6;
      s.stated_limit = 3.0;  // the profile copies the data sheet's range; stray light is not in it
      s.signal_at_km_min = 1.0;
      s.signal_at_km_max = 2.5;
      s.turbid_probability = 0.30;
      s.turbid_min = 1.2;
      s.turbid_max = 2.8;
      break;
    case PlateKind::depleting:
      s.fastest_t10_reads_min = 1;
      s.fastest_t10_reads_max = 3;
      break;
    case PlateKind::late_start:
      s.dead_time_reads_min = 2;
      s.dead_time_reads_max = 6;
      break;
    case PlateKind::slow_onset:
      s.onset_probability = 1.0;
      s.onset_per_plate = true;
      break;
  }
  return s;
}

}  // namespace vzero::sim
