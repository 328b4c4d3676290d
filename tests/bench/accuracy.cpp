// vzero_accuracy: how close the rate finder's v0 comes to the truth on simulated plates,
// next to the naive slope of the first 10 reads.
//
//   vzero_accuracy [options] [SEED ...]
//     SEED ...             plates to simulate (default: 1001 … 1040)
//     --seeds FIRST N      N consecutive seeds starting at FIRST
//     --no-ceiling         do not pass the detector's linear limit as signal_ceiling
//     --no-substrate       do not pass S0 (no conversion limit, tangent bound from max_conversion)
//     --noise-scale F      multiply the simulated read noise by F
//     --estimator NAME     theil-sen | ols | huber;  --tangent MODE  never | curved | always
//     --set NAME VALUE     change one numeric RateOptions field (developer knob)
//     --worst N            list the N wells with the largest error
//     --dump SEED WELL     print one well's trace and result
//     --quiet              summary lines only
//
// Each plate comes from tests/sim/plate_sim.hpp (invented scenario: a chromogenic hydrolase
// assay on a 96-well plate, truth v0 = Vmax·S0/(Km + S0)). The harness does what the pipeline
// does before the rate stage: per read it subtracts the mean of the row's substrate-only
// blanks, takes the blanks' read noise (robust SD of second differences), and passes the
// substrate and the known conversion factor 1/(ε·l). find_rate runs with default options
// except signal_ceiling, set to the simulated detector's linear limit (2.5 AU), as an
// instrument profile or method file would; a second pass without it is summarised at the end.
// Exit status 0 when every target is met, 1 otherwise.
#include <algorithm>
#include <cstdio>
#include <cstdlib>
#include <map>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "../sim/plate_sim.hpp"
#include "rates/robust.hpp"
#include "vzero/rates.hpp"

namespace {

using vzero::ReadStatus;
namespace sim = vzero::sim;

// NumPy-style percentile (linear interpolation between order statistics).
double percentile(std::vector<double> v, double q) {
  if (v.empty()) return NAN;
  std::sort(v.begin(), v.end());
  const double pos = q / 100.0 * static_cast<double>(v.size() - 1);
  const auto lo = static_cast<std::size_t>(pos);
  const std::size_t hi = std::min(lo + 1, v.size() - 1);
  return v[lo] + (pos - static_cast<double>(lo)) * (v[hi] - v[lo]);
}

// Robust read-noise SD of one trace from second differences (Var = 6σ² for white noise).
double second_difference_sd(const std::vector<double>& y) {
  std::vector<double> d;
  for (std::size_t i = 1; i + 1 < y.size(); ++i)
    if (std::isfinite(y[i - 1]) && std::isfinite(y[i]) && std::isfinite(y[i + 1]))
      d.push_back(std::fabs(y[i + 1] - 2 * y[i] + y[i - 1]));
  if (d.empty()) return NAN;
  return 1.4826 * vzero::detail::median_inplace(d) / std::sqrt(6.0);
}

struct ClassStats {
  int wells = 0, flagged = 0, corrected = 0, neither = 0;
  std::vector<double> err, naive;
};

struct WellLine {
  double err;
  std::string text;
};

struct Totals {
  std::vector<WellLine> wells;  // for --worst
  std::vector<double> err, naive, err_clean;
  int sample_wells = 0, blank_wells = 0, results = 0, finite = 0, plates = 0, tangent_used = 0;
  std::map<std::string, int> flags, ends;
  std::map<std::string, ClassStats> classes;
};

bool has_flag(const vzero::RateResult& r, const char* f) {
  return std::find(r.flags.begin(), r.flags.end(), f) != r.flags.end();
}

void run_plate(std::uint64_t seed, const vzero::RateOptions& opt, bool give_substrate, Totals& tot, int dump_well = -1,
               const sim::PlateSpec& spec = {}) {
  const sim::Plate p = sim::simulate_plate(spec, seed);
  // The same plate without spikes: what the finder would report had no bubble formed.
  sim::PlateSpec twin_spec = spec;
  twin_spec.spike_probability = 0;
  const sim::Plate twin = sim::simulate_plate(twin_spec, seed);
  const int reads = static_cast<int>(p.time_s.size());
  ++tot.plates;
  // Blanks: per row, mean signal of the blank wells per read; pooled noise SD.
  std::vector<std::vector<double>> blank(static_cast<std::size_t>(p.rows), std::vector<double>(static_cast<std::size_t>(reads), NAN));
  std::vector<double> blank_sd;
  std::vector<int> blanks_per_row(static_cast<std::size_t>(p.rows), 0);
  for (int row = 0; row < p.rows; ++row) {
    for (int i = 0; i < reads; ++i) {
      double sum = 0;
      int k = 0;
      for (int col = 0; col < p.columns; ++col) {
        const auto w = static_cast<std::size_t>(row * p.columns + col);
        if (p.truth[w].role != sim::Role::blank || p.status[w][static_cast<std::size_t>(i)] != ReadStatus::ok) continue;
        sum += p.signal[w][static_cast<std::size_t>(i)];
        ++k;
      }
      if (k > 0) blank[static_cast<std::size_t>(row)][static_cast<std::size_t>(i)] = sum / k;
    }
    for (int col = 0; col < p.columns; ++col) {
      const auto w = static_cast<std::size_t>(row * p.columns + col);
      if (p.truth[w].role != sim::Role::blank) continue;
      ++tot.blank_wells;
      ++blanks_per_row[static_cast<std::size_t>(row)];
      blank_sd.push_back(second_difference_sd(p.signal[w]));
    }
  }
  const double sd_b = vzero::detail::median_inplace(blank_sd);
  for (int w = 0; w < p.rows * p.columns; ++w) {
    const sim::WellTruth& truth = p.truth[static_cast<std::size_t>(w)];
    if (truth.role != sim::Role::sample) continue;
    ++tot.sample_wells;
    const int row = w / p.columns;
    const auto& raw = p.signal[static_cast<std::size_t>(w)];
    std::vector<double> y(static_cast<std::size_t>(reads));
    std::vector<ReadStatus> st = p.status[static_cast<std::size_t>(w)];
    for (int i = 0; i < reads; ++i) {
      const auto ui = static_cast<std::size_t>(i);
      const double b = blank[static_cast<std::size_t>(row)][ui];
      if (st[ui] == ReadStatus::ok && !std::isfinite(b)) st[ui] = ReadStatus::missing;
      y[ui] = st[ui] == ReadStatus::ok ? raw[ui] - b : NAN;
    }
    vzero::TraceView tr{p.time_s.data(), y.data(), raw.data(), st.data(), reads};
    if (give_substrate) {
      tr.substrate = truth.s0_uM;
      tr.conc_per_signal = 1.0 / p.signal_per_uM;
    }
    tr.noise_sd = sd_b * std::sqrt(1.0 + 1.0 / std::max(1, blanks_per_row[static_cast<std::size_t>(row)]));
    const vzero::RateResult r = vzero::find_rate(tr, opt);
    ++tot.results;
    if (w == dump_well) {
      std::printf("well %d truth v0 %.6g uM/s (%.6g AU/s) s0 %.4g km %.4g vmax %.4g lag %.1f art %u noise_sd %.4g\n", w,
                  truth.v0_uM_s, truth.v0_uM_s * p.signal_per_uM, truth.s0_uM, truth.km_uM, truth.vmax_uM_s, truth.lag_s,
                  truth.artefacts, tr.noise_sd);
      for (int i = 0; i < reads; ++i) {
        const auto ui = static_cast<std::size_t>(i);
        std::printf("%4d %7.1f raw %9.5f y %9.5f st %d used %d  true %9.5f\n", i, p.time_s[ui], raw[ui], y[ui],
                    static_cast<int>(st[ui]), r.used[ui],
                    p.signal_per_uM * sim::mm_product(p.time_s[ui] + p.dead_time_s, truth.s0_uM, truth.km_uM, truth.vmax_uM_s));
      }
      std::printf("slope %.6g se %.6g line %.6g tangent %.6g (%s) end %s window %g-%g flags:", r.slope, r.slope_se,
                  r.line_slope, r.tangent_slope, r.tangent.c_str(), r.window_end.c_str(), r.t_start_s, r.t_end_s);
      for (const auto& f : r.flags) std::printf(" %s", f.c_str());
      std::printf("\n");
    }
    const double v0 = r.slope / p.signal_per_uM;
    const double err = std::isfinite(v0) ? 100 * std::fabs(v0 - truth.v0_uM_s) / truth.v0_uM_s : INFINITY;
    if (std::isfinite(v0)) ++tot.finite;
    if (r.tangent == "parabola") ++tot.tangent_used;
    // Naive: OLS over the first 10 ok reads.
    std::vector<double> nt, ny;
    for (int i = 0; i < reads && nt.size() < 10; ++i)
      if (st[static_cast<std::size_t>(i)] == ReadStatus::ok) {
        nt.push_back(p.time_s[static_cast<std::size_t>(i)]);
        ny.push_back(y[static_cast<std::size_t>(i)]);
      }
    const double naive_v0 = vzero::detail::ols(nt.data(), ny.data(), static_cast<int>(nt.size())).slope / p.signal_per_uM;
    const double naive_err = std::isfinite(naive_v0) ? 100 * std::fabs(naive_v0 - truth.v0_uM_s) / truth.v0_uM_s : INFINITY;
    tot.err.push_back(err);
    tot.naive.push_back(naive_err);
    {
      // Time to 10 % conversion from the integrated equation, from reaction start.
      const double t10 = (0.1 * truth.s0_uM + truth.km_uM * std::log(1 / 0.9)) / truth.vmax_uM_s;
      std::string fl;
      for (const auto& f : r.flags) fl += f + ";";
      tot.wells.push_back({err, fmt::format("seed {} well {:>2} S0/Km {:4.2f} t10 {:6.1f}s dt {:2.0f} dead {:4.1f} n {:2} art {:2} | "
                                            "err {:6.2f} naive {:6.2f} | win {:5.0f}-{:5.0f} n{:2} out {} {} end {} lag {:.0f} | "
                                            "line {:+.4f} tan {:+.4f} | {}",
                                            seed, w, truth.s0_uM / truth.km_uM, t10, p.read_interval_s, p.dead_time_s, reads,
                                            truth.artefacts & sim::k_default_scenario_bits, err, naive_err, r.t_start_s, r.t_end_s, r.n_points, r.n_outliers,
                                            r.tangent, r.window_end, r.lag_s, r.line_slope / p.signal_per_uM / truth.v0_uM_s - 1,
                                            r.tangent_slope / p.signal_per_uM / truth.v0_uM_s - 1, fl)});
    }
    if (r.flags.empty()) tot.err_clean.push_back(err);
    for (const auto& f : r.flags) ++tot.flags[f];
    ++tot.ends[r.window_end];

    const auto account = [&](const char* name, bool flagged, bool clean_reads) {
      ClassStats& c = tot.classes[name];
      ++c.wells;
      c.err.push_back(err);
      c.naive.push_back(naive_err);
      if (flagged) ++c.flagged;
      else if (clean_reads && err <= 5.0) ++c.corrected;
      else ++c.neither;
    };
    if (truth.artefacts & sim::k_saturated) {
      bool clean = true;
      for (int i = std::max(0, truth.first_saturated_read); i < reads; ++i) clean &= r.used[static_cast<std::size_t>(i)] == 0;
      account("saturated", has_flag(r, "overflow") || has_flag(r, "ceiling"), clean);
    }
    if (truth.artefacts & sim::k_spike) {
      // Corrected: the spike reads are unused and v0 is within 2 % (of the truth) of the v0
      // found on the same well simulated without its spikes.
      std::vector<double> y_twin(static_cast<std::size_t>(reads));
      const auto& raw_twin = twin.signal[static_cast<std::size_t>(w)];
      for (int i = 0; i < reads; ++i) {
        const auto ui = static_cast<std::size_t>(i);
        y_twin[ui] = st[ui] == ReadStatus::ok ? raw_twin[ui] - blank[static_cast<std::size_t>(row)][ui] : NAN;
      }
      vzero::TraceView tw = tr;
      tw.y = y_twin.data();
      tw.raw = raw_twin.data();
      const double v0_twin = vzero::find_rate(tw, opt).slope / p.signal_per_uM;
      const double twin_slope = v0_twin * p.signal_per_uM;
      bool clean = std::fabs(v0 - v0_twin) <= 0.02 * truth.v0_uM_s || (twin_slope >= r.ci_low && twin_slope <= r.ci_high);
      for (int sr : truth.spike_reads) clean &= r.used[static_cast<std::size_t>(sr)] == 0;
      ClassStats& c = tot.classes["spiked"];
      ++c.wells;
      c.err.push_back(err);
      c.naive.push_back(naive_err);
      if (has_flag(r, "outliers")) ++c.flagged;
      else if (clean) ++c.corrected;
      else {
        ++c.neither;
        tot.wells.back().text += fmt::format(" SPIKE-NEITHER twin {:+.4f} spikes", v0_twin / truth.v0_uM_s - 1);
        for (int sr : truth.spike_reads) tot.wells.back().text += fmt::format(" {}", sr);
      }
    }
    if (truth.artefacts & sim::k_lag) account("lag", has_flag(r, "lag"), true);
    if (truth.artefacts & sim::k_mixing) account("mixing", has_flag(r, "outliers") || has_flag(r, "lag"), true);
    if (truth.artefacts & sim::k_turbid) account("turbid", has_flag(r, "overflow") || has_flag(r, "nonlinear"), true);
    if (truth.artefacts & sim::k_depletion) account("depletion", false, true);
    if ((truth.artefacts & sim::k_default_scenario_bits) == 0) account("none", false, true);
  }
}

}  // namespace

int main(int argc, char** argv) {
  std::vector<std::uint64_t> seeds;
  vzero::RateOptions opt;
  sim::PlateSpec spec;
  opt.signal_ceiling = spec.linear_limit;  // the simulated detector's linear limit
  bool give_substrate = true, quiet = false;
  int worst = 0, dump_well = -1;
  std::uint64_t dump_seed = 0;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    if (a == "--seeds" && i + 2 < argc) {
      const auto first = std::strtoull(argv[i + 1], nullptr, 10);
      const auto count = std::strtoull(argv[i + 2], nullptr, 10);
      for (std::uint64_t k = 0; k < count; ++k) seeds.push_back(first + k);
      i += 2;
    } else if (a == "--tangent" && i + 1 < argc) {
      if (!vzero::parse_tangent_mode(argv[++i], opt.tangent)) { std::fprintf(stderr, "unknown tangent mode\n"); return 2; }
    } else if (a == "--estimator" && i + 1 < argc) {
      if (!vzero::parse_estimator(argv[++i], opt.estimator)) { std::fprintf(stderr, "unknown estimator\n"); return 2; }
    } else if (a == "--set" && i + 2 < argc) {
      const std::string k = argv[i + 1];
      const double v = std::strtod(argv[i + 2], nullptr);
      i += 2;
      if (k == "tangent_alpha") opt.tangent_alpha = v;
      else if (k == "tangent_reach") opt.tangent_reach = v;
      else if (k == "linearity_alpha") opt.linearity_alpha = v;
      else if (k == "slope_drift") opt.slope_drift = v;
      else if (k == "outlier_k") opt.outlier_k = v;
      else if (k == "min_points") opt.min_points = static_cast<int>(v);
      else if (k == "max_conversion") opt.max_conversion = v;
      else { std::fprintf(stderr, "unknown option %s\n", k.c_str()); return 2; }
    } else if (a == "--noise-scale" && i + 1 < argc) {
      const double f = std::strtod(argv[++i], nullptr);
      spec.noise_sd_min *= f;
      spec.noise_sd_max *= f;
    } else if (a == "--no-ceiling") {
      opt.signal_ceiling = NAN;
    } else if (a == "--no-substrate") {
      give_substrate = false;
    } else if (a == "--dump" && i + 2 < argc) {
      dump_seed = std::strtoull(argv[i + 1], nullptr, 10);
      dump_well = std::atoi(argv[i + 2]);
      i += 2;
    } else if (a == "--worst" && i + 1 < argc) {
      worst = std::atoi(argv[++i]);
    } else if (a == "--quiet") {
      quiet = true;
    } else if (!a.empty() && a[0] != '-') {
      seeds.push_back(std::strtoull(a.c_str(), nullptr, 10));
    } else {
      std::fprintf(stderr, "usage: vzero_accuracy [--seeds FIRST N] [--no-ceiling] [--no-substrate] [--noise-scale F]\n"
                           "       [--estimator NAME] [--tangent MODE] [--set NAME VALUE] [--worst N] [--dump SEED WELL] [SEED ...]\n");
      return 2;
    }
  }
  if (const std::string why = opt.validate(); !why.empty()) { std::fprintf(stderr, "%s\n", why.c_str()); return 2; }
  if (dump_well >= 0) {
    Totals t;
    run_plate(dump_seed, opt, give_substrate, t, dump_well, spec);
    return 0;
  }
  if (seeds.empty())
    for (std::uint64_t s = 1001; s <= 1040; ++s) seeds.push_back(s);

  Totals tot;
  for (auto s : seeds) run_plate(s, opt, give_substrate, tot, -1, spec);
  // The same plates without the ceiling, to show what it buys.
  Totals bare;
  if (std::isfinite(opt.signal_ceiling)) {
    vzero::RateOptions o2 = opt;
    o2.signal_ceiling = NAN;
    for (auto s : seeds) run_plate(s, o2, give_substrate, bare, -1, spec);
  }

  std::string out;
  out += "vzero accuracy harness: simulated plates, invented scenario (tests/sim/plate_sim.hpp)\n";
  out += fmt::format("seeds {} … {} ({} plates); {} sample wells, {} blank wells\n", seeds.front(), seeds.back(), tot.plates,
                     tot.sample_wells, tot.blank_wells);
  out += fmt::format(
      "find_rate options: min_points {}, max_conversion {}, estimator {}, window {}, linearity_alpha {}, slope_drift {},\n"
      "  outlier_k {}, lod_factor {}, tangent {} (reach {}), detect_lag {}, skip_s {}, signal_ceiling {}\n",
      opt.min_points, opt.max_conversion, vzero::to_string(opt.estimator), vzero::to_string(opt.window),
      opt.linearity_alpha, opt.slope_drift, opt.outlier_k, opt.lod_factor, vzero::to_string(opt.tangent), opt.tangent_reach,
      opt.detect_lag ? "yes" : "no", opt.skip_s,
      std::isfinite(opt.signal_ceiling) ? fmt::format("{} AU", opt.signal_ceiling) : std::string("none"));
  out += fmt::format("inputs: signal minus the row's blank mean; {}; noise_sd from the blanks\n",
                     give_substrate ? "substrate S0 and conc_per_signal 1/(eps*l) given" : "no substrate given");
  out += fmt::format(
      "scenario: 8 S0 levels (0.5-8 Km) x 5 enzyme levels x 2, 16 blanks; reads every 10/15/20/30 s for 10-30 min;\n"
      "  Km {}-{} uM; read noise {}-{} AU; dead time {}-{} s; fastest well at 10 % conversion after {}-{} reads;\n"
      "  spikes {} %, lag {} %, disturbed first read {} %, turbid {} % of wells; detector linear to {} AU, overflow past {} AU\n\n",
      spec.km_min_uM, spec.km_max_uM, spec.noise_sd_min, spec.noise_sd_max, spec.dead_time_min_s, spec.dead_time_max_s,
      spec.fastest_t10_reads_min, spec.fastest_t10_reads_max, 100 * spec.spike_probability, 100 * spec.lag_probability,
      100 * spec.mixing_probability, 100 * spec.turbid_probability, spec.linear_limit, spec.overflow_true);
  out += "absolute % error of v0              wells   median     p90     max\n";
  const auto line = [&](const char* name, const std::vector<double>& v) {
    out += fmt::format("  {:<32} {:>5}  {:>7.2f} {:>7.2f} {:>7.1f}\n", name, v.size(), percentile(v, 50), percentile(v, 90),
                       v.empty() ? NAN : *std::max_element(v.begin(), v.end()));
  };
  line("vzero (every sample well)", tot.err);
  line("naive OLS, first 10 reads", tot.naive);
  line("vzero, wells with no flag", tot.err_clean);
  out += fmt::format("  (initial tangent used for {} wells)\n\n", tot.tangent_used);
  if (!quiet) {
    out += "artefact wells     wells flagged corrected neither   vzero med/p90    naive med/p90\n";
    for (const char* name : {"saturated", "spiked", "lag", "mixing", "turbid", "depletion", "none"}) {
      const auto it = tot.classes.find(name);
      if (it == tot.classes.end()) continue;
      const ClassStats& c = it->second;
      out += fmt::format("  {:<16} {:>5} {:>7} {:>9} {:>7}   {:>6.2f} {:>6.2f}   {:>6.2f} {:>6.2f}\n", name, c.wells, c.flagged,
                         c.corrected, c.neither, percentile(c.err, 50), percentile(c.err, 90), percentile(c.naive, 50),
                         percentile(c.naive, 90));
    }
    out += "  (flagged: overflow/ceiling for saturated, outliers for spiked, lag for lag, outliers/lag for mixing,\n"
           "   overflow/nonlinear for turbid; corrected: not flagged, the artefact's reads unused, and for spiked\n"
           "   wells the v0 of the same well simulated without spikes within 2 % or within the 95 % interval,\n"
           "   for the others |error| <= 5 %;\n"
           "   depletion (> 50 % converted by the last read) and none are listed for their errors)\n\n";
    out += "flags raised:";
    for (const auto& [f, n] : tot.flags) out += fmt::format(" {} {},", f, n);
    if (!tot.flags.empty()) out.pop_back();
    out += "\nwindow ended by:";
    for (const auto& [f, n] : tot.ends) out += fmt::format(" {} {},", f, n);
    out.pop_back();
    out += "\n";
  }
  const double med = percentile(tot.err, 50), p90 = percentile(tot.err, 90);
  int art_total = 0, art_ok = 0;
  for (const char* name : {"saturated", "spiked"}) {
    const auto it = tot.classes.find(name);
    if (it == tot.classes.end()) continue;
    art_total += it->second.wells;
    art_ok += it->second.flagged + it->second.corrected;
  }
  const bool lost = tot.results != tot.sample_wells || tot.finite != tot.sample_wells;
  if (!bare.err.empty()) {
    int b_total = 0, b_ok = 0;
    for (const char* name : {"saturated", "spiked"}) {
      const auto it = bare.classes.find(name);
      if (it == bare.classes.end()) continue;
      b_total += it->second.wells;
      b_ok += it->second.flagged + it->second.corrected;
    }
    out += fmt::format("same plates without signal_ceiling: median {:.2f} %, p90 {:.2f} %, saturated/spiked flagged or corrected {}/{}\n",
                       percentile(bare.err, 50), percentile(bare.err, 90), b_ok, b_total);
  }
  out += fmt::format("wells lost: {} of {} (every well has a result; {} with a finite v0)\n", tot.sample_wells - tot.results,
                     tot.sample_wells, tot.finite);
  out += fmt::format("targets: median {:.2f} % <= 2 % [{}], p90 {:.2f} % <= 5 % [{}], saturated/spiked flagged or corrected {}/{} [{}], no well lost [{}]\n",
                     med, med <= 2 ? "met" : "MISSED", p90, p90 <= 5 ? "met" : "MISSED", art_ok, art_total,
                     art_ok == art_total ? "met" : "MISSED", lost ? "MISSED" : "met");
  if (worst > 0) {
    std::stable_sort(tot.wells.begin(), tot.wells.end(), [](const WellLine& a, const WellLine& b) { return a.err > b.err; });
    out += "\nworst wells:\n";
    for (int i = 0; i < worst && i < static_cast<int>(tot.wells.size()); ++i) out += "  " + tot.wells[static_cast<std::size_t>(i)].text + "\n";
  }
  std::fputs(out.c_str(), stdout);
  const bool ok = med <= 2 && p90 <= 5 && art_ok == art_total && !lost;
  return ok ? 0 : 1;
}
