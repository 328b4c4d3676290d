// Batches of exports (include/vzero/batch.hpp): the parallel batch must give exactly what the
// one-file pipeline gives (read_run → analyse_run → rates_csv, the reference), whatever the
// thread count; the first failing file decides the error; progress never reaches a file.
// Inputs: the invented demo plate of demo-data/ in its wide, grid and long forms.
#include <filesystem>

#include "test_support.hpp"
#include "vzero/batch.hpp"
#include "vzero/error.hpp"
#include "vzero/outputs.hpp"

namespace {

using namespace vzero;
using test::source;

std::vector<std::string> demo_files() {
  return {source("demo-data/hydrolase_wide.csv"), source("demo-data/hydrolase_grid.txt"),
          source("demo-data/hydrolase_long.csv")};
}

AnalysisOptions demo_options() {
  AnalysisOptions o;
  o.convert.mode = ConvertMode::beer_lambert;
  o.convert.epsilon_per_m_cm = 18000;
  o.convert.path_cm = 0.5;
  return o;
}

}  // namespace

TEST_CASE("a batch gives the one-file pipeline's rows, with any thread count") {
  const PlateMap map = read_plate_map(source("demo-data/hydrolase_map.csv"));
  std::string reference;
  for (const auto& f : demo_files()) {
    const Run run = read_run(f, choose_profile(f, "").profile);
    AnalysisOptions o = demo_options();
    o.threads = 1;
    reference += rates_csv_rows(analyse_run(run, map, o), map.columns, false);
  }
  for (int threads : {1, 2, 3}) {
    BatchOptions b;
    b.analysis = demo_options();
    b.analysis.threads = threads;
    b.map_columns = map.columns;
    int calls = 0;
    const auto files = analyse_files(demo_files(), map, b, [&](const BatchProgress& p) {
      ++calls;
      CHECK(p.files_total == 3);
      CHECK(p.files_done == calls);
    });
    std::string rows;
    for (const auto& f : files) rows += f.rates_rows;
    INFO("threads = ", threads);
    CHECK(rows == reference);
    CHECK(calls == 3);
    // Only results are kept: the reads are gone, the rows and their flags stay.
    CHECK(files[0].run->channels[0].values.size() == 0);
    CHECK(files[0].analysis.channels[0].rows.size() == 96);
    CHECK(files[1].choice.profile.name == "grid-generic");
  }
}

TEST_CASE("the first failing file of a batch decides the error") {
  const PlateMap map = read_plate_map(source("demo-data/hydrolase_map.csv"));
  test::TempDir dir;
  test::spit(dir / "bad.csv", "Time [s],A1\n0,0.05\n10,oops\n");
  BatchOptions b;
  b.analysis = demo_options();
  b.analysis.threads = 2;
  b.map_columns = map.columns;
  b.profile = "wide-generic";
  std::vector<std::string> files = demo_files();
  files[0] = source("demo-data/hydrolase_wide.csv");
  files.resize(1);
  files.push_back(dir / "bad.csv");
  files.push_back(dir / "missing.csv");
  try {
    analyse_files(files, map, b);
    FAIL("no error");
  } catch (const InputError& e) {
    CHECK(e.where().file == dir / "bad.csv");
    CHECK(e.where().line == 3);
    CHECK(std::string(e.message()) == "expected a number for well A1, found \"oops\"");
  }
}

TEST_CASE("vzero rates writes no progress when stderr is not a terminal") {
  test::TempDir dir;
  const auto r = test::run_vzero("rates '" + source("demo-data/hydrolase_wide.csv") + "' '" +
                                     source("demo-data/hydrolase_wide.csv") + "' --layout '" +
                                     source("demo-data/hydrolase_map.csv") + "' --signal-only --blank matched -o rates.csv",
                                 dir.path.string());
  INFO(r.describe());
  CHECK(r.status == 0);
  CHECK(r.err.empty());
  CHECK(r.out.find("wells/s") == std::string::npos);  // the progress line's words
}
