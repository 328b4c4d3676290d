// The library's whole-run entry point (include/vzero/rates_run.hpp): the same outputs as the
// program, byte for byte, with nothing written to disk by the library.
#include "vzero/rates_run.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <map>

#include "core/files.hpp"
#include "test_support.hpp"
#include "vzero/outputs.hpp"

using namespace vzero;
using namespace vzero::test;

TEST_CASE("run_rates gives exactly what vzero rates writes") {
  TempDir dir;
  const std::string wide = source("demo-data/hydrolase_wide.csv"), map = source("demo-data/hydrolase_map.csv");
  const std::string method = source("demo-data/esterase_method.toml");
  auto cli = run_vzero("rates '" + wide + "' --layout '" + map + "' --method '" + method +
                           "' -o rates.csv --traces traces.csv --summary summary.csv -q",
                       dir.path.string());
  INFO(cli.describe());
  REQUIRE(cli.status == 0);

  const std::string out = (dir.path / "rates.csv").string();
  ResolvedSettings s = resolve_settings({{"layout", map},
                                         {"method", method},
                                         {"output", out},
                                         {"traces", (dir.path / "traces.csv").string()},
                                         {"summary", (dir.path / "summary.csv").string()}});
  s.settings.files = {wide};
  StringSink sink;
  RatesOutputs r = run_rates(s, sink);
  CHECK(sink.text().at("rates") == slurp((dir.path / "rates.csv").string()));
  CHECK(sink.text().at("traces") == slurp((dir.path / "traces.csv").string()));
  CHECK(r.summary_csv == slurp((dir.path / "summary.csv").string()));
  CHECK(r.datapackage_path == (dir.path / "datapackage.json").string());
  // The program adds the sha256 of each table it published (sha256_hex: OpenSSL's digest).
  const std::map<std::string, std::string> hashes{
      {"rates", detail::sha256_hex(sink.text().at("rates"))},
      {"traces", detail::sha256_hex(sink.text().at("traces"))},
      {"summary", detail::sha256_hex(r.summary_csv)}};
  CHECK(with_table_hashes(r.datapackage_json, hashes) == slurp((dir.path / "datapackage.json").string()));
  CHECK(r.report_html.empty());
  // Provenance: each input once, with the method file's checksum read where it was parsed.
  int methods = 0;
  for (const auto& in : r.provenance.inputs) methods += in.kind == "method";
  CHECK(methods == 1);
  CHECK(r.provenance.inputs.size() == 3);  // plate map, method, export
  CHECK(!s.method_sha256.empty());
}

TEST_CASE("a profile file read by several exports is one input") {
  TempDir dir;
  spit((dir.path / "p.toml").string(), slurp(source("instrument-profiles/wide-generic.toml")));
  const std::string wide = source("demo-data/hydrolase_wide.csv");
  ResolvedSettings s = resolve_settings({{"layout", source("demo-data/hydrolase_map.csv")},
                                         {"profile", (dir.path / "p.toml").string()},
                                         {"output", (dir.path / "rates.csv").string()},
                                         {"signal-only", "true"}});
  s.settings.files = {wide, wide};
  StringSink sink;
  RatesOutputs r = run_rates(s, sink);
  int profiles = 0;
  for (const auto& in : r.provenance.inputs) profiles += in.kind == "profile";
  CHECK(profiles == 1);
  CHECK(r.analyses.size() == 2);
}

TEST_CASE("a plate whose sample rates are mostly negative is warned of, with the direction that fits") {
  // Four samples whose signal falls 0.001 AU per read (as NADH used up at 340 nm) and a
  // constant blank: under the default direction every rate is negative.
  TempDir dir;
  std::string text = "Channel: A340\nTime [s],A1,A2,A3,A4,B1\n";
  for (int i = 0; i < 10; ++i)
    text += fmt::format("{},{:.3f},{:.3f},{:.3f},{:.3f},0.100\n", 30 * i, 1.0 - 0.001 * i, 1.0 - 0.0011 * i,
                        1.0 - 0.0012 * i, 1.0 - 0.0013 * i);
  spit((dir.path / "nadh.csv").string(), text);
  spit((dir.path / "map.csv").string(), "well,role\nA1,sample\nA2,sample\nA3,sample\nA4,sample\nB1,blank\n");
  const auto run = [&](const std::string& direction) {
    ResolvedSettings s = resolve_settings({{"layout", (dir.path / "map.csv").string()},
                                           {"output", (dir.path / "rates.csv").string()},
                                           {"signal-only", "true"},
                                           {"direction", direction}});
    s.settings.files = {(dir.path / "nadh.csv").string()};
    StringSink sink;
    return run_rates(s, sink).warnings;
  };
  const auto said = [](const std::vector<std::string>& w) {
    return std::count_if(w.begin(), w.end(), [](const std::string& x) {
      return x.find("4 of 4 sample wells have negative rates") != std::string::npos &&
             x.find("pass --direction down") != std::string::npos;
    });
  };
  CHECK(said(run("up")) == 1);
  CHECK(said(run("down")) == 0);  // the rates are positive then
}
