// One simulated plate through the rate finder, well by well, against the truth.
#include <algorithm>
#include <cmath>
#include <cstdio>

#include <fmt/format.h>

#include "accuracy_harness.hpp"
#include "rates/robust.hpp"
#include "vzero/analysis.hpp"
#include "vzero/blank.hpp"

namespace vzero::accuracy {
namespace {

bool has_flag(const RateResult& r, const char* f) {
  return std::find(r.flags.begin(), r.flags.end(), f) != r.flags.end();
}

// Matched blanks, as `vzero rates --blank matched` subtracts them: the plate as a channel
// (reads × wells), each row's blank wells the matched set of its samples (match = the row),
// through the library's blank stage (vzero::apply_blank), so the harness measures what the
// pipeline does.
struct Blanks {
  Channel channel;
  BlankResult result;
};

Blanks plate_blanks(const sim::Plate& p, Totals& tot) {
  Blanks b;
  const auto reads = static_cast<Eigen::Index>(p.time_s.size());
  const auto wells = static_cast<Eigen::Index>(p.signal.size());
  Channel& c = b.channel;
  c.time_s = p.time_s;
  c.values.resize(reads, wells);
  c.status.resize(reads, wells);
  PlateMap map;
  const PlateFormat format{p.rows, p.columns};
  for (Eigen::Index w = 0; w < wells; ++w) {
    const auto uw = static_cast<std::size_t>(w);
    c.wells.push_back(static_cast<int>(w));
    for (Eigen::Index i = 0; i < reads; ++i) {
      c.values(i, w) = p.signal[uw][static_cast<std::size_t>(i)];
      c.status(i, w) = p.status[uw][static_cast<std::size_t>(i)];
    }
    WellInfo info;
    info.well = format.well(static_cast<int>(w));
    info.role = p.truth[uw].role == sim::Role::blank ? Role::blank : Role::sample;
    info.match = row_label(info.well.row);
    map.wells[info.well] = info;
    tot.blank_wells += info.role == Role::blank;
  }
  BlankOptions o;
  o.strategy = BlankStrategy::matched;
  b.result = apply_blank(c, map, format, o);
  return b;
}

void dump(const sim::Plate& p, int w, const TraceView& tr, const RateResult& r, const std::vector<double>& raw,
          const std::vector<double>& y, const std::vector<ReadStatus>& st) {
  const sim::WellTruth& truth = p.truth[static_cast<std::size_t>(w)];
  std::printf(
      "well %d truth v0 %.6g uM/s (%.6g AU/s) s0 %.4g km %.4g vmax %.4g lag %.1f art %u noise_sd %.4g rate_sd %.4g\n",
      w, truth.v0_uM_s, truth.v0_uM_s * p.signal_per_uM, truth.s0_uM, truth.km_uM, truth.vmax_uM_s, truth.lag_s,
      truth.artefacts, tr.noise_sd, tr.rate_sd);
  for (std::size_t i = 0; i < p.time_s.size(); ++i) {
    std::printf(
        "%4zu %7.1f raw %9.5f y %9.5f st %d used %d  true %9.5f", i, p.time_s[i], raw[i], y[i], static_cast<int>(st[i]),
        r.used[i],
        p.signal_per_uM * sim::mm_product(p.time_s[i] + p.dead_time_s, truth.s0_uM, truth.km_uM, truth.vmax_uM_s));
    if (!truth.ideal.empty()) std::printf("  ideal %9.5f", truth.ideal[i]);
    std::printf("\n");
  }
  std::printf("slope %.6g se %.6g line %.6g tangent %.6g (%s) end %s window %g-%g flags:", r.slope, r.slope_se,
              r.line_slope, r.tangent_slope, r.tangent.c_str(), r.window_end.c_str(), r.t_start_s, r.t_end_s);
  for (const auto& f : r.flags) std::printf(" %s", f.c_str());
  std::printf("\n");
}

// Naive: OLS over the first 10 ok reads.
double naive_slope(const sim::Plate& p, const std::vector<double>& y, const std::vector<ReadStatus>& st) {
  std::vector<double> nt, ny;
  for (std::size_t i = 0; i < p.time_s.size() && nt.size() < 10; ++i)
    if (st[i] == ReadStatus::ok) {
      nt.push_back(p.time_s[i]);
      ny.push_back(y[i]);
    }
  return vzero::detail::least_squares_line(nt.data(), ny.data(), static_cast<int>(nt.size())).slope;
}

// A yardstick: OLS over the straight-line window the truth picks (least bias² + SE²),
// without the reads the truth knows to be spikes.
double oracle_slope(const sim::Plate& p, const sim::WellTruth& truth, const std::vector<double>& y,
                    const std::vector<ReadStatus>& st) {
  std::vector<double> ot, oy;
  for (int i = truth.oracle_first; i >= 0 && i <= truth.oracle_last; ++i)
    if (st[static_cast<std::size_t>(i)] == ReadStatus::ok &&
        std::find(truth.spike_reads.begin(), truth.spike_reads.end(), i) == truth.spike_reads.end()) {
      ot.push_back(p.time_s[static_cast<std::size_t>(i)]);
      oy.push_back(y[static_cast<std::size_t>(i)]);
    }
  return ot.size() < 2 ? NAN
                       : vzero::detail::least_squares_line(ot.data(), oy.data(), static_cast<int>(ot.size())).slope;
}

// Spiked wells are "corrected" when the spike reads are unused and v0 is within 2 % (of the
// truth) of the v0 found on the same well simulated without its spikes.
void account_spiked(const sim::Plate& p, const sim::Plate& twin, const PlateRun& run, const Blanks& blanks, int w,
                    const TraceView& tr, const RateResult& r, double err, double naive_err, Totals& tot) {
  const sim::WellTruth& truth = p.truth[static_cast<std::size_t>(w)];
  const std::size_t reads = twin.time_s.size();
  const double v0 = r.slope / twin.signal_per_uM;
  std::vector<double> y_twin(reads);
  const auto& raw_twin = twin.signal[static_cast<std::size_t>(w)];
  for (std::size_t i = 0; i < reads; ++i)
    y_twin[i] =
        tr.status[i] == ReadStatus::ok ? raw_twin[i] - blanks.result.blank(static_cast<Eigen::Index>(i), w) : NAN;
  TraceView tw = tr;
  tw.y = y_twin.data();
  tw.raw = raw_twin.data();
  const double v0_twin = find_rate(tw, run.options).slope / twin.signal_per_uM;
  const double twin_slope = v0_twin * twin.signal_per_uM;
  bool clean = std::fabs(v0 - v0_twin) <= 0.02 * truth.v0_uM_s || (twin_slope >= r.ci_low && twin_slope <= r.ci_high);
  for (int sr : truth.spike_reads) clean &= r.used[static_cast<std::size_t>(sr)] == 0;
  ClassStats& c = tot.classes["spiked"];
  ++c.wells;
  c.err.push_back(err);
  c.naive.push_back(naive_err);
  if (has_flag(r, "outliers"))
    ++c.flagged;
  else if (clean)
    ++c.corrected;
  else {
    ++c.neither;
    tot.wells.back().text += fmt::format(" SPIKE-NEITHER twin {:+.4f} spikes", v0_twin / truth.v0_uM_s - 1);
    for (int sr : truth.spike_reads) tot.wells.back().text += fmt::format(" {}", sr);
  }
}

// The default scenario's artefact classes: flagged, corrected (not flagged, the artefact's
// reads unused, |error| ≤ 5 %) or neither.
void account_classes(const sim::Plate& p, const sim::Plate& twin, const PlateRun& run, const Blanks& blanks, int w,
                     unsigned art, const TraceView& tr, const RateResult& r, double err, double naive_err,
                     Totals& tot) {
  const sim::WellTruth& truth = p.truth[static_cast<std::size_t>(w)];
  const auto account = [&](const char* name, bool flagged, bool clean_reads) {
    ClassStats& c = tot.classes[name];
    ++c.wells;
    c.err.push_back(err);
    c.naive.push_back(naive_err);
    if (flagged)
      ++c.flagged;
    else if (clean_reads && err <= 5.0)
      ++c.corrected;
    else
      ++c.neither;
  };
  if (art & sim::k_saturated) {
    bool clean = true;
    for (std::size_t i = static_cast<std::size_t>(std::max(0, truth.first_saturated_read)); i < p.time_s.size(); ++i)
      clean &= r.used[i] == 0;
    account("saturated", has_flag(r, "overflow") || has_flag(r, "ceiling"), clean);
  }
  if (art & sim::k_spike) account_spiked(p, twin, run, blanks, w, tr, r, err, naive_err, tot);
  if (art & sim::k_lag) account("lag", has_flag(r, "lag"), true);
  if (art & sim::k_mixing) account("mixing", has_flag(r, "outliers") || has_flag(r, "lag"), true);
  if (art & sim::k_turbid) account("turbid", has_flag(r, "overflow") || has_flag(r, "nonlinear"), true);
  if (art & sim::k_depletion) account("depletion", false, true);
  if (art == 0) account("none", false, true);
}

std::string listing_line(const PlateRun& run, const sim::Plate& p, int w, unsigned art, const RateResult& r, double err,
                         double naive_err, const std::vector<std::string>& flags,
                         const std::vector<std::string>& notes) {
  const sim::WellTruth& truth = p.truth[static_cast<std::size_t>(w)];
  // Time to 10 % conversion from the integrated equation, from reaction start.
  const double t10 = (0.1 * truth.s0_uM + truth.km_uM * std::log(1 / 0.9)) / truth.vmax_uM_s;
  std::string fl;  // the flags, then the notes in brackets
  for (const auto& f : flags) fl += f + ";";
  if (!notes.empty()) {
    fl += "[";
    for (const auto& f : notes) fl += f + (&f == &notes.back() ? "]" : ",");
  }
  return fmt::format(
      "seed {} well {:>2} S0/Km {:4.2f} t10 {:6.1f}s dt {:2.0f} dead {:4.1f} n {:2} art {:2} | "
      "err {:6.2f} naive {:6.2f} | win {:5.0f}-{:5.0f} n{:2} out {} {} end {} lag {:.0f} | "
      "line {:+.4f} tan {:+.4f} hw {:.3f} cov {} | {}",
      run.seed, w, truth.s0_uM / truth.km_uM, t10, p.read_interval_s, p.dead_time_s, p.time_s.size(), art, err,
      naive_err, r.t_start_s, r.t_end_s, r.n_points, r.n_outliers, r.tangent, r.window_end, r.lag_s,
      r.line_slope / p.signal_per_uM / truth.v0_uM_s - 1, r.tangent_slope / p.signal_per_uM / truth.v0_uM_s - 1,
      0.5 * (r.ci_high - r.ci_low) / std::fabs(r.slope),
      (r.ci_low / p.signal_per_uM <= truth.v0_uM_s && truth.v0_uM_s <= r.ci_high / p.signal_per_uM) ? 1 : 0, fl);
}

}  // namespace

void run_plate(const PlateRun& run, Totals& tot) {
  const sim::Plate p = sim::simulate_plate(run.spec, run.seed);
  // The same plate without spikes: what the finder would report had no bubble formed.
  sim::PlateSpec twin_spec = run.spec;
  twin_spec.spike_probability = 0;
  const sim::Plate twin = sim::simulate_plate(twin_spec, run.seed);
  const std::size_t reads = p.time_s.size();
  const int plate_index = tot.plates++;
  const Blanks blanks = plate_blanks(p, tot);
  for (int w = 0; w < p.rows * p.columns; ++w) {
    const sim::WellTruth& truth = p.truth[static_cast<std::size_t>(w)];
    if (truth.role != sim::Role::sample) continue;
    ++tot.sample_wells;
    const auto& raw = p.signal[static_cast<std::size_t>(w)];
    std::vector<double> y(reads);
    std::vector<ReadStatus> st(reads);
    for (std::size_t i = 0; i < reads; ++i) {
      const auto ii = static_cast<Eigen::Index>(i);
      st[i] = blanks.result.status(ii, w);
      y[i] = st[i] == ReadStatus::ok ? blanks.result.corrected(ii, w) : NAN;
    }
    TraceView tr{p.time_s.data(), y.data(), raw.data(), st.data(), static_cast<int>(reads)};
    if (run.give_substrate) {
      tr.substrate = truth.s0_uM;
      tr.conc_per_signal = 1.0 / p.signal_per_uM;
    }
    const WellBlank& wb = blanks.result.wells[static_cast<std::size_t>(w)];
    tr.noise_sd = wb.blank_noise_sd;
    tr.rate_sd = wb.blank_rate_sd;
    tr.rate_sd_dof = wb.blank_rate_dof;
    RateOptions options = run.options;
    if (run.give_reaction_start) options.time_zero_s = p.time_s.front() - p.dead_time_s;
    const RateResult r = find_rate(tr, options);
    ++tot.results;
    // What rates.csv would say of the well: its flags (trust withheld) apart from its notes
    // (corrections made), sorted as the pipeline sorts them (vzero::sort_rate_words).
    bool used_high = false;
    for (std::size_t i = 0; i < reads && i < r.used.size(); ++i)
      used_high |= r.used[i] && raw[i] >= run.options.signal_ceiling;
    // The blank stage's words first (blank-noisy, blank-left-out, …), as the pipeline adds them.
    std::vector<std::string> flags = wb.flags, notes = wb.notes;
    sort_rate_words(r.flags, Role::sample, used_high, flags, notes);
    if (w == run.dump_well) dump(p, w, tr, r, raw, y, st);
    const double v0 = r.slope / p.signal_per_uM;
    const double err = std::isfinite(v0) ? 100 * std::fabs(v0 - truth.v0_uM_s) / truth.v0_uM_s : INFINITY;
    if (std::isfinite(v0)) ++tot.finite;
    if (r.tangent == "parabola") ++tot.tangent_used;
    const double naive_v0 = naive_slope(p, y, st) / p.signal_per_uM;
    const double naive_err =
        std::isfinite(naive_v0) ? 100 * std::fabs(naive_v0 - truth.v0_uM_s) / truth.v0_uM_s : INFINITY;
    tot.err.push_back(err);
    tot.naive.push_back(naive_err);
    // The default listing knows the default scenario's artefacts only; the mix shows them all.
    const unsigned art = run.mix ? truth.artefacts : truth.artefacts & sim::k_default_scenario_bits;
    tot.wells.push_back({err, listing_line(run, p, w, art, r, err, naive_err, flags, notes)});
    if (flags.empty()) tot.err_clean.push_back(err);
    for (const auto& f : flags) ++tot.flags[f];
    for (const auto& f : notes) ++tot.notes[f];
    ++tot.ends[r.window_end];
    account_classes(p, twin, run, blanks, w, art, tr, r, err, naive_err, tot);
    const double oracle_v0 = oracle_slope(p, truth, y, st) / p.signal_per_uM;
    WellRecord rec{plate_index,
                   run.seed,
                   run.kind,
                   w,
                   truth.artefacts,
                   truth.measurable,
                   err,
                   std::isfinite(v0) ? 100 * (v0 - truth.v0_uM_s) / truth.v0_uM_s : INFINITY,
                   naive_err,
                   std::isfinite(oracle_v0) ? 100 * std::fabs(oracle_v0 - truth.v0_uM_s) / truth.v0_uM_s : INFINITY,
                   !flags.empty(),
                   r.tangent == "parabola",
                   flags,
                   r.ci_low / p.signal_per_uM <= truth.v0_uM_s && truth.v0_uM_s <= r.ci_high / p.signal_per_uM,
                   0.5 * (r.ci_high - r.ci_low) / std::fabs(r.slope),
                   !(truth.limited_half_width <= run.options.precision_limit),
                   !(truth.ideal_half_width <= run.options.precision_limit)};
    if (run.mix)
      tot.wells.back().text += fmt::format(
          " | kind {} meas {} best-line {:.3f} ideal-hw {:.3f} limited-hw {:.3f} "
          "blank-dist {:+.5f} | {}",
          to_string(run.kind), truth.measurable ? "yes" : "no", truth.line_error, truth.ideal_half_width,
          truth.limited_half_width, truth.blank_disturbance_AU, artefact_names(truth.artefacts));
    tot.records.push_back(rec);
  }
}

}  // namespace vzero::accuracy
