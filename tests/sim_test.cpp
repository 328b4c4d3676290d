// The plate simulator (tests/sim/) against closed forms worked here by hand: the integrated
// Michaelis–Menten equation at two points where Lambert W is known exactly, the hysteretic
// onset at t = τ, the stray-light model at 3 AU, the disturbed start after k reads, the
// straight-line window judgement on a parabola; then whole plates with the noise turned off,
// whose reads must be those closed forms.
#include <cmath>
#include <map>
#include <vector>

#include "sim/plate_mix.hpp"
#include "test_support.hpp"

namespace sim = vzero::sim;

namespace {

// The omega constant Ω = W(1) = 0.5671432904097838…, from memory; it solves Ω·e^Ω = 1, checked
// below, so ln(1/Ω) = Ω.
constexpr double k_omega = 0.5671432904097838;

// A plate with nothing random left but the plate-level draws: no noise, drift, spontaneous
// hydrolysis, spikes, lags, turbid wells or mixing; the baseline exactly 0.05 AU.
sim::PlateSpec quiet_spec() {
  sim::PlateSpec s;
  s.noise_sd_min = s.noise_sd_max = 0;
  s.noise_proportional = 0;
  s.temperature_drift_max = 0;
  s.well_drift_sd = 0;
  s.nonenzymatic_max_per_s = 0;
  s.mixing_probability = s.spike_probability = s.lag_probability = s.turbid_probability = 0;
  s.baseline_min = s.baseline_max = 0.05;
  s.substrate_signal_per_uM = 0;
  return s;
}

// Integrates dS/dt = −(1 − e^(−t/τ))·Vmax·S/(Km + S) by classical Runge–Kutta (h = 0.01 s):
// an independent route to the hysteretic progress curve. Returns the product at t_end.
double rk4_hysteretic(double s0, double km, double vmax, double tau, double t_end) {
  const auto f = [&](double t, double s) { return -(1 - std::exp(-t / tau)) * vmax * s / (km + s); };
  double s = s0, t = 0;
  const double h = 0.01;
  const int steps = static_cast<int>(std::lround(t_end / h));
  for (int i = 0; i < steps; ++i, t += h) {
    const double k1 = f(t, s), k2 = f(t + h / 2, s + h / 2 * k1), k3 = f(t + h / 2, s + h / 2 * k2),
                 k4 = f(t + h, s + h * k3);
    s += h / 6 * (k1 + 2 * k2 + 2 * k3 + k4);
  }
  return s0 - s;
}

}  // namespace

TEST_CASE("integrated Michaelis–Menten: the Lambert W closed form at two exact points") {
  CHECK_REL(k_omega * std::exp(k_omega), 1.0, 1e-15);
  // S0 = Km = 1 µM, Vmax = 1 µM/s, t = 1 s: the argument (S0/Km)·exp((S0 − Vmax·t)/Km) is 1,
  // so S = Km·W(1) = Ω and P = 1 − Ω = 0.4328567095902162 µM. By hand, the implicit form
  // Vmax·t = P + Km·ln(S0/S) = (1 − Ω) + ln(1/Ω) = 1 − Ω + Ω = 1 holds.
  CHECK_REL(sim::mm_product(1.0, 1.0, 1.0, 1.0), 1 - k_omega, 1e-14);
  // S0 = 400 µM, Km = 100 µM, Vmax = 1 µM/s: at t = 200 + 100·ln 2 = 269.3147180559945 s the
  // argument is 4·exp(4 − 2 − ln 2) = 2e², and W(2e²) = 2 (2·e² = 2e²), so S = 200 µM and
  // P = 200 µM; by hand, P + Km·ln(S0/S) = 200 + 100·ln 2 = Vmax·t.
  CHECK_REL(sim::mm_product(200 + 100 * std::log(2.0), 400, 100, 1), 200.0, 1e-13);
  CHECK(sim::mm_product(0.0, 400, 100, 1) == 0.0);
  CHECK_REL(sim::mm_v0(400, 100, 1), 0.8, 1e-15);  // 1·400/(100 + 400)
}

TEST_CASE("hysteretic onset: the stretched clock, the rate at t = τ, and a Runge–Kutta integration") {
  // θ(τ) = τ − τ(1 − e⁻¹) = τ/e: 60/e = 22.072766470286542 s (hand).
  CHECK_REL(sim::onset_time(60, 60), 60 / std::exp(1.0), 1e-14);
  CHECK_REL(sim::onset_fraction(60, 60), 1 - std::exp(-1.0), 1e-15);  // 0.6321205588285577
  CHECK(sim::onset_time(30, 0) == 30.0);
  // The rate at t = τ is (1 − e⁻¹) of the active enzyme's at the substrate left then.
  const double s0 = 150, km = 100, vmax = 0.5, tau = 60, h = 1e-3;
  const auto product = [&](double t) { return sim::mm_product(sim::onset_time(t, tau), s0, km, vmax); };
  const double rate = (product(tau + h) - product(tau - h)) / (2 * h);
  const double s_tau = s0 - product(tau);
  CHECK_REL(rate / (vmax * s_tau / (km + s_tau)), 1 - std::exp(-1.0), 1e-7);
  // The closed form against numerical integration, at 1, 3 and 10 τ (through heavy depletion).
  for (double t : {60.0, 180.0, 600.0}) CHECK_REL(product(t), rk4_hysteretic(s0, km, vmax, tau, t), 1e-9);
}

TEST_CASE("stray light: 3 AU with s = 10⁻³ reads 2.6994 AU, compressing slopes by half") {
  // −log10((10⁻³ + 10⁻³)/1.001) = 3 − log10 2 + log10 1.001 = 3 − 0.30103000 + 0.00043408
  // = 2.69940408 AU (log10 2 = 0.3010299957 and log10 1.001 = 0.0004340775, from memory).
  CHECK_REL(sim::stray_light_absorbance(3.0, 1e-3), 2.6994040818, 1e-10);
  CHECK(sim::stray_light_absorbance(0.0, 1e-3) == 0.0);     // (1 + s)/(1 + s) = 1
  CHECK_REL(sim::stray_light_gain(3.0, 1e-3), 0.5, 1e-12);  // 10⁻³/(10⁻³ + 10⁻³)
  // Slopes lose 5 % from −log10(s·0.95/0.05) = −log10(0.019) = 1.7212464 AU (hand: log10 1.9 = 0.2787536).
  CHECK_REL(sim::stray_light_onset(1e-3, 0.05), 1.7212463990, 1e-9);
  CHECK_REL(sim::stray_light_gain(sim::stray_light_onset(1e-3, 0.05), 1e-3), 0.95, 1e-12);
  // The ceiling: −log10(s/(1 + s)) ≈ 3.000434 AU, never passed.
  CHECK(sim::stray_light_absorbance(6.0, 1e-3) < -std::log10(1e-3 / 1.001));
}

TEST_CASE("disturbed start: e⁻³ ≈ 5 % of the offset is left after k reads") {
  for (int k = 1; k <= 3; ++k) {
    const double tau = sim::disturbance_tau(k, 30.0);
    CHECK_REL(tau, 10.0 * k, 1e-15);
    CHECK_REL(sim::disturbance(30.0 * k, -0.02, tau), -0.02 * 0.049787068367863944, 1e-12);  // e⁻³
    CHECK(sim::disturbance(0.0, -0.02, tau) == -0.02);
  }
}

TEST_CASE("straight-line windows: a parabola's 5-read slope is v − 4c") {
  // y = v·t − c·t² at t = 0 … 4: the OLS slope of t² on t is Σ(t − 2)t²/Σ(t − 2)² = 40/10 = 4
  // (hand), so the 5-read line has slope v − 4c = 1 − 0.04: 4 % low.
  std::vector<double> t, y;
  for (int i = 0; i <= 4; ++i) {
    t.push_back(i);
    y.push_back(i - 0.01 * i * i);
  }
  CHECK_REL(sim::line_error_best(t, y, 1.0, 5), 0.04, 1e-12);
  CHECK(sim::line_error_best(t, y, 1.0, 6) == INFINITY);  // no window of 6 reads
  y[2] = NAN;                                             // a gap breaks every 5-read run
  CHECK(sim::line_error_best(t, y, 1.0, 5) == INFINITY);
  // A straight line is measured exactly; the oracle prefers the longest window under noise.
  std::vector<double> t2, y2;
  for (int i = 0; i < 12; ++i) {
    t2.push_back(10.0 * i);
    y2.push_back(0.05 + 0.002 * 10.0 * i);
  }
  const sim::LineWindows w = sim::line_windows(t2, y2, 0.002, 5, 0.001);
  CHECK_ABS(w.best_bias, 0.0, 1e-12);
  CHECK(w.first == 0);
  CHECK(w.last == 11);
}

TEST_CASE("a plate without noise reads the closed forms: MM progress, hysteretic lag, stray light") {
  sim::PlateSpec s = quiet_spec();
  s.onset_probability = 0.5;
  s.stray_light_min = s.stray_light_max = 1e-3;
  s.disturb_probability = 0.3;
  const sim::Plate p = sim::simulate_plate(s, 17);
  REQUIRE(p.stray_light > 0);
  int lagged = 0, disturbed = 0;
  for (std::size_t w = 0; w < p.truth.size(); ++w) {
    const sim::WellTruth& tr = p.truth[w];
    lagged += tr.lag_hysteretic;
    disturbed += (tr.artefacts & sim::k_disturbed) != 0;
    if (tr.role == sim::Role::sample) CHECK_REL(tr.v0_uM_s, tr.vmax_uM_s * tr.s0_uM / (tr.km_uM + tr.s0_uM), 1e-15);
    for (std::size_t i = 0; i < p.time_s.size(); ++i) {
      const double t_react = p.time_s[i] + p.dead_time_s;
      const double prod = tr.role == sim::Role::sample
                              ? sim::mm_product(sim::onset_time(t_react, tr.lag_hysteretic ? tr.lag_s : 0), tr.s0_uM,
                                                tr.km_uM, tr.vmax_uM_s)
                              : 0.0;
      // Noise is 0, so disturbances are too (they are sized in noise SDs).
      const double a = 0.05 + p.signal_per_uM * prod;
      CHECK_REL(p.signal[w][i], sim::stray_light_absorbance(a, 1e-3), 1e-12);
      if (tr.role == sim::Role::sample)
        CHECK_REL(tr.ideal[i] + 0.05,
                  sim::stray_light_absorbance(a, 1e-3) - sim::stray_light_absorbance(0.05, 1e-3) + 0.05, 1e-12);
    }
  }
  CHECK(lagged > 10);
  CHECK(disturbed > 10);
}

TEST_CASE("disturbed blanks pass into their row's samples; undisturbed wells are untouched") {
  sim::PlateSpec base = quiet_spec();
  base.noise_sd_min = base.noise_sd_max = 0.001;  // disturbances are sized in noise SDs
  sim::PlateSpec dist = base;
  dist.disturb_probability = 0.2;
  dist.disturb_blank_probability = 0.3;
  const sim::Plate a = sim::simulate_plate(base, 5), b = sim::simulate_plate(dist, 5);
  int rows_hit = 0;
  for (int row = 0; row < b.rows; ++row) {
    double sum = 0;
    std::vector<const sim::WellTruth*> blanks;
    for (int col = b.columns - 2; col < b.columns; ++col) {
      blanks.push_back(&b.truth[static_cast<std::size_t>(row * b.columns + col)]);
      sum += blanks.back()->disturbance_AU;
    }
    rows_hit += sum != 0;
    for (int col = 0; col < b.columns - 2; ++col) {
      const auto w = static_cast<std::size_t>(row * b.columns + col);
      const sim::WellTruth& tr = b.truth[w];
      CHECK(((tr.artefacts & sim::k_blank_disturbed) != 0) == (sum != 0));
      CHECK_REL(tr.blank_disturbance_AU + 1, sum / 2 + 1, 1e-15);
      if (tr.artefacts & sim::k_disturbed) {
        CHECK(std::fabs(tr.disturbance_AU) >= 5 * 0.001 * (1 - 1e-12));
        CHECK(std::fabs(tr.disturbance_AU) <= 60 * 0.001 * (1 + 1e-12));
      } else {
        CHECK(a.signal[w] == b.signal[w]);  // the further artefacts draw from their own stream
      }
      // The noise-free trace: the undisturbed one, plus its own offset, minus the blanks' mean.
      for (std::size_t i = 0; i < b.time_s.size(); ++i) {
        double blank_part = 0;
        for (const auto* bl : blanks)
          blank_part += sim::disturbance(b.time_s[i], bl->disturbance_AU, bl->disturbance_tau_s) / 2;
        const double own = sim::disturbance(b.time_s[i], tr.disturbance_AU, tr.disturbance_tau_s);
        CHECK_ABS(b.truth[w].ideal[i], a.truth[w].ideal[i] + own - blank_part, 1e-12);
      }
    }
  }
  CHECK(rows_hit > 0);
}

TEST_CASE("the scenario mix: kinds by seed, 8-read screening plates, late starts, low signal") {
  std::map<sim::PlateKind, int> count;
  for (std::uint64_t seed = 9001; seed <= 9100; ++seed) ++count[sim::kind_for_seed(seed)];
  CHECK(count[sim::PlateKind::standard] == 30);
  CHECK(count[sim::PlateKind::screening8] == 20);
  CHECK(count[sim::PlateKind::slow_onset] == 10);
  const sim::Plate hts = sim::simulate_plate(sim::mix_spec(sim::PlateKind::screening8), 9003);
  CHECK(hts.time_s.size() == 8);
  CHECK(hts.truth.size() == 384);
  for (const auto& tr : hts.truth)
    if (tr.role == sim::Role::sample) CHECK((tr.artefacts & sim::k_short_run) != 0);
  const sim::Plate late = sim::simulate_plate(sim::mix_spec(sim::PlateKind::late_start), 9008);
  CHECK(late.dead_time_s >= 2 * late.read_interval_s);
  CHECK(late.dead_time_s <= 6 * late.read_interval_s);
  // Low ε: 10 % of the lowest S0 (0.5 Km) reads as 2–6 read-noise SDs.
  const sim::Plate low = sim::simulate_plate(sim::mix_spec(sim::PlateKind::low_signal), 9005);
  const double snr = 0.1 * 0.5 * low.truth[0].km_uM * low.signal_per_uM / low.noise_sd;
  CHECK(snr >= 2);
  CHECK(snr <= 6);
  // Slow onset: one τ for every sample well, at most a third of the run.
  const sim::Plate slow = sim::simulate_plate(sim::mix_spec(sim::PlateKind::slow_onset), 9009);
  CHECK(slow.truth[0].lag_hysteretic);
  CHECK(slow.truth[0].lag_s <= slow.time_s.back() / 3 + 1e-9);
  CHECK(slow.truth[1].lag_s == slow.truth[0].lag_s);
}

TEST_CASE("measurable: slow wells are, wells far into depletion at the first read are not") {
  sim::PlateSpec s = quiet_spec();
  s.fastest_t10_reads_min = s.fastest_t10_reads_max = 0.5;  // 10 % converted half a read after the first
  s.dead_time_min_s = s.dead_time_max_s = 60;
  const sim::Plate p = sim::simulate_plate(s, 3);
  const sim::WellTruth& fast = p.truth[0];                                            // top enzyme, lowest S0
  const sim::WellTruth& slow = p.truth[static_cast<std::size_t>(7 * p.columns + 9)];  // lowest enzyme, S0 = 8 Km
  CHECK(!fast.measurable);
  CHECK((fast.artefacts & sim::k_strong_depletion) != 0);
  CHECK((fast.artefacts & sim::k_early_start) != 0);
  CHECK(slow.measurable);
  CHECK(slow.line_error < 0.01);
}
