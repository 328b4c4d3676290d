// Per-channel settings: a method file's [channel.NAME] tables give each channel its own ε,
// path, direction and detector limit, so a two-wavelength export is one run and one rates.csv.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/method.hpp"
#include "vzero/rates_run.hpp"

using namespace vzero;
using namespace vzero::test;

namespace {

// An invented coupled assay read at two wavelengths, noiseless and linear so that the true
// rates are closed forms: NADH consumed at 2 µM/min (A340 falls by ε·l·v = 6220 × 0.5 ×
// 2e-6 AU/min) while a p-nitrophenolate product forms at 3 µM/min (A405 rises by 18000 ×
// 0.5 × 3e-6 AU/min). 21 reads, 30 s apart; B1 is a flat blank in both channels.
constexpr double k_nadh_per_min = 2, k_pnp_per_min = 3;

std::string two_channel_export() {
  std::string out = "well,channel,time_s,temperature_c,value\n";
  for (const char* w : {"A1", "A2", "B1"})
    for (int i = 0; i <= 20; ++i) {
      const double minutes = i * 0.5;
      const bool blank = w[0] == 'B';
      const double a340 = 1.2 - (blank ? 0 : 6220 * 0.5 * 2e-6 * minutes);
      const double a405 = 0.05 + (blank ? 0 : 18000 * 0.5 * 3e-6 * minutes);
      out += fmt::format("{},A340,{},25.0,{:.6f}\n{},A405,{},25.0,{:.6f}\n", w, i * 30, a340, w, i * 30, a405);
    }
  return out;
}

const char* const k_map = "well,role,substrate\nA1,sample,1000\nA2,sample,1000\nB1,blank,1000\n";

const char* const k_method =
    "path-cm = 0.5\n"
    "\n"
    "[channel.A340]   # NADH falls\n"
    "epsilon = 6220\n"
    "direction = \"down\"\n"
    "\n"
    "[channel.A405]\n"
    "epsilon = 18000\n"
    "signal-ceiling = 0.2\n";

struct TwoChannels {
  RatesOutputs out;
  std::string rates;
};

TwoChannels run_two_channels(const TempDir& dir, const std::string& method) {
  spit(dir / "plate.csv", two_channel_export());
  spit(dir / "map.csv", k_map);
  spit(dir / "m.toml", method);
  ResolvedSettings s =
      resolve_settings({{"layout", dir / "map.csv"}, {"method", dir / "m.toml"}, {"output", dir / "rates.csv"}});
  s.settings.files = {dir / "plate.csv"};
  StringSink sink;
  TwoChannels r{run_rates(s, sink), ""};
  r.rates = sink.text().at("rates");
  return r;
}

std::string run_error(const TempDir& dir, const std::string& method) {
  try {
    run_two_channels(dir, method);
  } catch (const InputError& e) {
    return e.formatted();
  }
  return "no error";
}

}  // namespace

TEST_CASE("two channels with their own ε and direction give their true rates in one run") {
  TempDir dir;
  TwoChannels r = run_two_channels(dir, k_method);
  const auto& channels = r.out.analyses.at(0).channels;
  REQUIRE(channels.size() == 2);
  for (const auto& ca : channels) {
    INFO(ca.channel->name);
    const bool nadh = ca.channel->name == "A340";
    CHECK(ca.direction_sign == (nadh ? -1.0 : 1.0));
    CHECK(ca.v0_unit == "uM/min");
    for (const auto& row : ca.rows) {
      if (row.role != Role::sample) continue;
      // The closed-form rates above: linear traces, so the slope is exact up to rounding of
      // the 6-decimal reads.
      CHECK(row.v0 == doctest::Approx(nadh ? k_nadh_per_min : k_pnp_per_min).epsilon(1e-4));
      // The ceiling is A405's only: its reads above 0.2 AU are left out (a note), A340's
      // reads at 1.2 AU are not.
      const bool ceiling = std::find(row.notes.begin(), row.notes.end(), "ceiling") != row.notes.end();
      CHECK(ceiling == !nadh);
    }
  }
  // One rates.csv holds both channels.
  CHECK(r.rates.find(",A340,") != std::string::npos);
  CHECK(r.rates.find(",A405,") != std::string::npos);
  // datapackage.json records each channel's own settings, as the method file wrote them.
  const std::string& pkg = r.out.datapackage_json;
  CHECK(pkg.find("\"channel_settings\"") != std::string::npos);
  CHECK(pkg.find(fmt::format("\"from\": \"{}:4\"", dir / "m.toml")) != std::string::npos);
  CHECK(pkg.find("\"epsilon\": \"6220\"") != std::string::npos);
  CHECK(pkg.find("\"direction\": \"down\"") != std::string::npos);
  CHECK(pkg.find("\"signal-ceiling\": \"0.2\"") != std::string::npos);
}

TEST_CASE("an ε in mM⁻¹·cm⁻¹ or a path in mm is warned of, with the value it likely means") {
  // A340's ε written as 6.22 (NADH in mM⁻¹·cm⁻¹): its rates come out 1000 × the closed form
  // above, as given, and the run says why and what to write instead; the warning is recorded
  // in datapackage.json. A path of 5 (mm meant) is 10 × too long for a plate well. The run
  // as it should be written warns of neither.
  TempDir dir;
  std::string slipped = k_method;
  slipped.replace(slipped.find("epsilon = 6220"), 14, "epsilon = 6.22");
  slipped.replace(slipped.find("path-cm = 0.5"), 13, "path-cm = 5");
  TwoChannels r = run_two_channels(dir, slipped);
  for (const auto& row : r.out.analyses.at(0).channels.at(0).rows)
    if (row.role == Role::sample) CHECK(row.v0 == doctest::Approx(k_nadh_per_min * 1000 / 10).epsilon(1e-4));
  const auto has = [&](const std::string& text) {
    return std::any_of(r.out.warnings.begin(), r.out.warnings.end(),
                       [&](const std::string& w) { return w.find(text) != std::string::npos; });
  };
  CHECK(has("ε = 6.22 M⁻¹·cm⁻¹ ([channel.A340] in "));
  CHECK(has("give 6220;"));
  CHECK(has("the path length 5 cm (--path-cm)"));
  CHECK(has("if it is in mm, give 0.5;"));
  CHECK(r.out.datapackage_json.find("give 6220;") != std::string::npos);
  TempDir clean;
  CHECK(run_two_channels(clean, k_method).out.warnings.empty());
}

TEST_CASE("the same run from the command line writes one rates.csv with both channels") {
  TempDir dir;
  spit(dir / "plate.csv", two_channel_export());
  spit(dir / "map.csv", k_map);
  spit(dir / "m.toml", k_method);
  auto cli = run_vzero("rates plate.csv --layout map.csv --method m.toml -q", dir.path.string());
  INFO(cli.describe());
  REQUIRE(cli.status == 0);
  const std::string rates = slurp(dir / "rates.csv");
  CHECK(rates.find(",A340,") != std::string::npos);
  CHECK(rates.find(",A405,") != std::string::npos);
}

TEST_CASE("method channel tables: unknown channels and keys, and incomplete conversions, are errors") {
  TempDir dir;
  const std::string m = dir / "m.toml";
  CHECK(run_error(dir, "path-cm = 0.5\n[channel.A450]\nepsilon = 6220\n") ==
        fmt::format("{}:3:1: the method's [channel.A450] names a channel {} does not have; it has: A340, A405\n"
                    "  possible fix: name the table after one of the export's channels, e.g. [channel.A340]",
                    m, dir / "plate.csv"));
  const std::string bad_key = run_error(dir, "[channel.A340]\nblank = \"plate\"\n");
  CHECK(bad_key.rfind(m + ":2:1: method key `blank` cannot be set per channel (in [channel.A340])", 0) == 0);
  CHECK(bad_key.find("a channel's table takes epsilon, epsilon-preset, path-cm, direction, signal-ceiling, "
                     "absorbance-limit") != std::string::npos);
  CHECK(
      run_error(dir, "[channel.A340]\npath-cm = 1\n")
          .rfind(m + ":2:1: method key `path-cm` is \"1\"; a path length needs an ε: give epsilon in [channel.A340] or "
                     "for the run",
                 0) == 0);
  CHECK(run_error(dir, "[channel.A340]\nepsilon = 6220\n")
            .rfind(m + ":2:1: [channel.A340]: Beer–Lambert needs a path length", 0) == 0);
  CHECK(run_error(dir, "path-cm = 0.5\n[channel.A340]\nepsilon = -1\n")
            .rfind(m + ":3:1: method key `epsilon` is \"-1\"; expected a number above 0", 0) == 0);
  // An empty table (a misspelt channel name in it would otherwise pass unnoticed).
  CHECK(run_error(dir, "epsilon = 6220\npath-cm = 0.5\n[channel.A34O]\n").rfind(m + ":3:", 0) == 0);
  CHECK(run_error(dir, "epsilon = 6220\npath-cm = 0.5\n[channel.A34O]\n").find("holds no settings") !=
        std::string::npos);
}
