// What `vzero rates --report` and `--traces` make from the run in memory: the report drawn
// from the analyses is the page `vzero report` draws from the files the same run writes,
// byte for byte; a large export's traces, streamed a well at a time, are the bytes the
// one-file pipeline's traces_csv gives, with any thread count. The reference of each check
// is the same job done the other way (the written files; the whole table in one string).
// Inputs: the invented demo plates of demo-data/ and a simulated plate (tests/sim, invented).
#include <filesystem>
#include <vector>

#include "bench/bench_files.hpp"
#include "test_support.hpp"
#include "vzero/outputs.hpp"
#include "vzero/rates_run.hpp"
#include "vzero/report.hpp"

using namespace vzero;
using namespace vzero::test;

namespace {

// The demo map with an enzyme mass column (invented: 1 µg of enzyme per well).
std::string map_with_mass() {
  const std::string map = slurp(source("demo-data/hydrolase_map.csv"));
  std::string out;
  for (std::size_t at = 0; at < map.size();) {
    const std::size_t end = map.find('\n', at);
    std::string line = map.substr(at, end - at);
    at = end == std::string::npos ? map.size() : end + 1;
    if (!line.empty() && line[0] != '#') line += line.rfind("well,", 0) == 0 ? ",enzyme_mg" : ",0.001";
    out += line + "\n";
  }
  return out;
}

// run_rates with a report, its tables written to `dir`; then the report of those files.
void same_report(const TempDir& dir, std::vector<GivenOption> given, const std::string& file) {
  given.push_back({"output", (dir.path / "rates.csv").string()});
  given.push_back({"traces", (dir.path / "traces.csv").string()});
  given.push_back({"summary", (dir.path / "summary.csv").string()});
  given.push_back({"report", (dir.path / "report.html").string()});
  ResolvedSettings s = resolve_settings(given);
  s.settings.files = {file};
  StringSink sink;
  const RatesOutputs r = run_rates(s, sink);
  spit((dir.path / "rates.csv").string(), sink.text().at("rates"));
  spit((dir.path / "traces.csv").string(), sink.text().at("traces"));
  spit((dir.path / "summary.csv").string(), r.summary_csv);
  spit(r.datapackage_path, r.datapackage_json);
  ReportFiles files;
  files.rates = (dir.path / "rates.csv").string();
  files.traces = (dir.path / "traces.csv").string();
  files.summary = (dir.path / "summary.csv").string();
  files.package = r.datapackage_path;
  REQUIRE(!r.report_html.empty());
  CHECK(render_report(read_report_input(files)) == r.report_html);
}

}  // namespace

TEST_CASE("the report made with the run is the report of the files it writes") {
  SUBCASE("the demo with its method, a well volume and enzyme masses") {
    TempDir dir;
    spit((dir.path / "map.csv").string(), map_with_mass());
    same_report(dir,
                {{"layout", (dir.path / "map.csv").string()},
                 {"method", source("demo-data/esterase_method.toml")},
                 {"well-volume-ul", "200"},
                 {"enzyme-mg-column", "enzyme_mg"}},
                source("demo-data/hydrolase_wide.csv"));
  }
  SUBCASE("the fluorescence demo on its standard curve, matched blanks") {
    TempDir dir;
    same_report(dir,
                {{"layout", source("demo-data/protease_fluor_map.csv")}, {"standards", "true"}, {"blank", "matched"}},
                source("demo-data/protease_fluor_wide.csv"));
  }
  SUBCASE("a path per well (water peak): a conversion factor per well") {
    TempDir dir;
    same_report(dir,
                {{"layout", source("demo-data/hydrolase_map.csv")},
                 {"epsilon", "18000"},
                 {"water-peak", "true"},
                 {"blank", "matched"}},
                source("demo-data/hydrolase_wide_waterpeak.csv"));
  }
}

TEST_CASE("a large export's traces are streamed a well at a time: the same bytes, any thread count") {
  // A simulated 384-well plate of 700 reads: 268,800 traces rows, more than the pool formats.
  static_assert(384LL * 700 > k_pool_trace_rows);
  TempDir dir;
  const sim::PlateSpec spec = bench::spec_for(384, 700);
  const sim::Plate plate = sim::simulate_plate(spec, 7);
  const std::string file = (dir.path / "plate.csv").string(), map = (dir.path / "map.csv").string();
  bench::write_wide(file, plate);
  bench::write_map(map, plate, spec);
  std::string reference;
  for (int threads : {1, 2}) {
    ResolvedSettings s = resolve_settings({{"layout", map},
                                           {"epsilon", "8000"},
                                           {"path-cm", "1"},
                                           {"output", (dir.path / "rates.csv").string()},
                                           {"traces", (dir.path / "traces.csv").string()},
                                           {"threads", std::to_string(threads)}});
    s.settings.files = {file};
    StringSink sink;
    const RatesOutputs r = run_rates(s, sink);
    if (reference.empty()) {
      const Run run = read_run(file, choose_profile(file, "").profile);
      std::vector<RunAnalysis> one;
      one.push_back(analyse_run(run, r.map, s.settings.analysis));
      reference = traces_csv(one);
    }
    INFO("threads = ", threads);
    CHECK(sink.text().at("traces").size() == reference.size());
    CHECK(sink.text().at("traces") == reference);
  }
}
