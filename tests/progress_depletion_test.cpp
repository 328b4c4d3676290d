// The progress-curve fit where initial rates struggle: simulated plates of the harness's
// "depleting" kind (tests/sim/plate_mix.hpp: the fastest well reaches 10 % conversion after
// 1–3 reads, so many initial-rate windows are short or flagged), with the mix's artefacts
// (disturbed starts, onsets, spikes, turbid wells, stray light). Each plate goes through
// `vzero rates` (blanks matched by substrate level) and `vzero progress`, as a user runs them;
// the known truth is the simulator's (invented data). Seeds 30007, 30017, … were not used to
// tune the fit; with seeds 33007–33197 they chose the interval rule (the wider of the
// model-based and the cluster-robust interval), which seeds 31007–31197 then measured.
#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

#include "bench/bench_files.hpp"
#include "sim/plate_mix.hpp"
#include "test_support.hpp"
#include "vzero/fit.hpp"
#include "vzero/table.hpp"

namespace {

double rel(double a, double b) { return std::fabs(a - b) / std::fabs(b); }

struct Estimates {
  std::map<std::string, std::array<double, 3>> by;  // method:parameter → estimate, ci_low, ci_high
  std::map<std::string, std::array<double, 2>> model_ci;  // estimate ± t(df)·se_model
  std::map<std::string, std::string> kind;                // which interval ci_low, ci_high are
  std::string failure;                                    // why vzero progress gave no fit
  int series = 0, significant = 0, flags = 0;             // Selwyn's tests (stable enzymes)
  double width(const std::string& key) const { return by.at(key)[2] - by.at(key)[1]; }
};

Estimates run_plate(std::uint64_t seed, vzero::sim::Plate& plate) {
  using vzero::test::run_vzero;
  const vzero::sim::PlateSpec spec = vzero::sim::mix_spec(vzero::sim::PlateKind::depleting);
  plate = vzero::sim::simulate_plate(spec, seed);
  vzero::test::TempDir dir;
  vzero::bench::write_wide(dir / "plate.csv", plate);
  vzero::bench::write_map(dir / "map.csv", plate, spec);
  // ε·l = the plate's signal per µM (AU/µM) with l = 1 cm: ε = signal_per_uM × 10⁶ M⁻¹·cm⁻¹.
  const auto rates = run_vzero(fmt::format("rates plate.csv --layout map.csv --epsilon {:.17g} --path-cm 1 "
                                           "--signal-ceiling {} --blank matched --match-column substrate "
                                           "-o rates.csv --traces traces.csv -q",
                                           plate.signal_per_uM * 1e6, spec.stated_limit),
                               dir.path.string());
  REQUIRE_MESSAGE(rates.status == 0, rates.describe());
  const auto r = run_vzero(
      "progress rates.csv --traces traces.csv --x substrate --enzyme enzyme --no-profile -o p.csv --stability st.csv",
      dir.path.string());
  Estimates e;
  if (std::filesystem::exists(dir / "st.csv")) {
    const vzero::Table st = vzero::read_table(dir / "st.csv");
    for (std::size_t k = 0; k < st.rows.size(); ++k) {
      if (st.rows[k][st.column("tested")] != "1") continue;
      ++e.series;
      e.significant += st.number(k, st.column("p_value")).value_or(1) < 0.01;
      e.flags += st.rows[k][st.column("flag")] == "enzyme-unstable";
    }
  }
  if (r.status != 0) {  // no fit: the reason on stderr, the table with the group's message
    REQUIRE_MESSAGE(r.err.find("no progress fit succeeded") != std::string::npos, r.describe());
    e.failure = r.err.substr(0, r.err.find('\n'));
    return e;
  }
  const vzero::Table t = vzero::read_table(dir / "p.csv");
  for (std::size_t k = 0; k < t.rows.size(); ++k) {
    const std::string key = t.rows[k][t.column("method")] + ":" + t.rows[k][t.column("parameter")];
    const double est = t.number(k, t.column("estimate")).value_or(NAN);
    e.by[key] = {est, t.number(k, t.column("ci_low")).value_or(NAN), t.number(k, t.column("ci_high")).value_or(NAN)};
    e.kind[key] = t.rows[k][t.column("interval")];
    // The t quantile of the model-based interval: t(df) (Boost, as the fit computes it).
    const double q = vzero::student_t_quantile(0.975, t.number(k, t.column("df")).value_or(NAN));
    const double se = t.number(k, t.column("se_model")).value_or(NAN);
    e.model_ci[key] = {est - q * se, est + q * se};
  }
  return e;
}

struct Coverage {
  int series = 0, significant = 0, flags = 0;  // Selwyn's tests: every enzyme of the simulator is stable
  int plates = 0, failed = 0, within = 0, narrower = 0, km_held = 0, kcat_held = 0, km_held_model = 0, kcat_held_model = 0;
  std::vector<double> km_ratio, kcat_ratio, km_err, kcat_err;  // widths progress / initial rates; errors in %
};

double median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  return v.size() % 2 ? v[v.size() / 2] : (v[v.size() / 2 - 1] + v[v.size() / 2]) / 2;
}

// Every plate of seeds first, first + 10, … last through both commands; the progress Km and kcat
// against the simulator's truth, their printed 95 % intervals and the model-based ones
// (estimate ± t·se_model, from the same rows) against it.
Coverage coverage(std::uint64_t first, std::uint64_t last) {
  Coverage c;
  for (std::uint64_t seed = first; seed <= last; seed += 10) {
    CAPTURE(seed);
    vzero::sim::Plate plate;
    const Estimates e = run_plate(seed, plate);
    c.series += e.series, c.significant += e.significant, c.flags += e.flags;
    if (!e.failure.empty()) {
      MESSAGE(fmt::format("seed {}: no progress fit: {}", seed, e.failure));
      ++c.failed;
      continue;
    }
    const double km = plate.truth.front().km_uM, kcat = plate.truth.front().vmax_uM_s * 60;
    const auto& pk = e.by.at("progress:Km");
    const auto& pc = e.by.at("progress:kcat");
    const auto& ik = e.by.at("initial-rates:Km");
    MESSAGE(fmt::format("seed {}: Km truth {:.2f}: progress {:.2f} [{:.2f}, {:.2f}] ({:+.2f} %, {} interval; model "
                        "[{:.2f}, {:.2f}]), initial rates {:.2f} ({:+.2f} %); kcat truth {:.4g}: progress {:+.2f} % "
                        "[{:+.2f}, {:+.2f}] %",
                        seed, km, pk[0], pk[1], pk[2], 100 * (pk[0] / km - 1), e.kind.at("progress:Km"),
                        e.model_ci.at("progress:Km")[0], e.model_ci.at("progress:Km")[1], ik[0],
                        100 * (ik[0] / km - 1), kcat, 100 * (pc[0] / kcat - 1), 100 * (pc[1] / kcat - 1),
                        100 * (pc[2] / kcat - 1)));
    ++c.plates;
    c.km_held += pk[1] <= km && km <= pk[2];
    c.kcat_held += pc[1] <= kcat && kcat <= pc[2];
    c.km_held_model += e.model_ci.at("progress:Km")[0] <= km && km <= e.model_ci.at("progress:Km")[1];
    c.kcat_held_model += e.model_ci.at("progress:kcat")[0] <= kcat && kcat <= e.model_ci.at("progress:kcat")[1];
    c.within += rel(pk[0], km) < 0.02 && rel(pc[0], kcat) < 0.02;
    c.km_err.push_back(100 * (pk[0] / km - 1));
    c.kcat_err.push_back(100 * (pc[0] / kcat - 1));
    c.km_ratio.push_back(e.width("progress:Km") / e.width("initial-rates:Km"));
    c.kcat_ratio.push_back(e.width("progress:kcat") / e.width("initial-rates:kcat"));
    c.narrower += c.km_ratio.back() < 1 && c.kcat_ratio.back() < 1;
  }
  const auto rms = [](const std::vector<double>& v) {
    double s = 0;
    for (double x : v) s += x * x;
    return std::sqrt(s / static_cast<double>(v.size()));
  };
  MESSAGE(fmt::format("seeds {}-{}: {} plates without a progress fit (the reason said); {} of {} plates within 2 % (RMS error Km {:.2f} %, kcat {:.2f} %); progress "
                      "intervals narrower for Km and kcat on {} of {}; width ratio progress / initial rates, median: Km "
                      "{:.2f}, kcat {:.2f}; the printed 95 % interval holds the truth: Km {} of {}, kcat {} of {} (the "
                      "model-based one: Km {}, kcat {})",
                      first, last, c.failed, c.within, c.plates, rms(c.km_err), rms(c.kcat_err), c.narrower, c.plates,
                      median(c.km_ratio), median(c.kcat_ratio), c.km_held, c.plates, c.kcat_held, c.plates,
                      c.km_held_model, c.kcat_held_model));
  MESSAGE(fmt::format("seeds {}-{}: Selwyn's test on {} stable S0 series: {} significant at 1 %, {} flagged", first,
                      last, c.series, c.significant, c.flags));
  return c;
}

}  // namespace

TEST_CASE("strong depletion: progress-curve Km and kcat within 2 % of the truth and narrower than initial rates") {
  const Coverage c = coverage(30007, 30097);
  CHECK(c.failed == 0);
  CHECK(c.within == c.plates);  // the target: Km and kcat within 2 % of the truth
  // The whole curves hold more information than the first reads: the intervals are narrower
  // on the typical plate (on a single plate, model misfit from per-well drift can widen them).
  CHECK(median(c.km_ratio) < 1);
  CHECK(median(c.kcat_ratio) < 1);
  // Binomial(10, 0.95): P(7 or fewer of 10 intervals hold the truth) = 0.012.
  CHECK(c.km_held >= 8);
  // Selwyn's test on stable enzymes: Binomial(80, 0.01): P(3 or more flags) = 0.047.
  CHECK(c.flags <= 2);
}

TEST_CASE("strong depletion, twenty fresh plates: the intervals' coverage") {
  // Seeds 31007–31197 were run only after the interval rule (the wider of the model-based and
  // the cluster-robust interval, clusters the wells sharing a blank set) was fixed on seeds
  // 30007–30097 and 33007–33197.
  const Coverage c = coverage(31007, 31197);
  CHECK(c.within == c.plates);
  CHECK(c.flags <= 3);  // Binomial(160, 0.01): P(4 or more) = 0.077
  CHECK(median(c.km_ratio) < 1);
}

TEST_CASE("strong depletion, twenty more fresh plates: the intervals' coverage") {
  // Seeds 34007–34197 were run only after the cluster-robust covariance was changed from CR1
  // to CR3 (on seeds 30007–30097 and 33007–33197).
  const Coverage c = coverage(34007, 34197);
  CHECK(c.within == c.plates);
  CHECK(median(c.km_ratio) < 1);
}
