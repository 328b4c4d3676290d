// The one table of flag and note words (include/vzero/flags.hpp) against what vzero writes
// and what the README says.
#include <fstream>
#include <set>
#include <sstream>

#include "test_support.hpp"
#include "vzero/flags.hpp"
#include "vzero/rates_run.hpp"
#include "vzero/table.hpp"

using namespace vzero;
using namespace vzero::test;

namespace {

std::vector<std::string> split_cells(const std::string& cell) {
  std::vector<std::string> out;
  std::stringstream ss(cell);
  for (std::string w; std::getline(ss, w, ';');)
    if (!w.empty()) out.push_back(w);
  return out;
}

}  // namespace

TEST_CASE("every word in a run's flags and notes is in the table, as the kind it is written") {
  // The demo runs (invented plates, demo-data/README.md), run by the library as the program
  // would: the wide export with its method, the grid and long twins, the fluorescence plate.
  struct DemoRun {
    std::string file, map;
    std::map<std::string, std::string> opts;
  };
  const std::vector<DemoRun> runs = {
      {"hydrolase_wide.csv", "hydrolase_map.csv", {{"method", source("demo-data/esterase_method.toml")}}},
      {"hydrolase_grid.txt", "hydrolase_map_grid.csv", {{"epsilon", "18000"}, {"path-cm", "0.5"}}},
      {"hydrolase_long.csv", "hydrolase_map.csv", {{"epsilon", "18000"}, {"path-cm", "0.5"}}},
      {"protease_fluor_wide.csv", "protease_fluor_map.csv", {{"signal-only", "true"}}},
  };
  std::set<std::string> seen;
  for (const DemoRun& run : runs) {
    INFO(run.file);
    auto kv = run.opts;
    kv["layout"] = source("demo-data/" + run.map);
    std::vector<GivenOption> given;
    for (const auto& [k, v] : kv) given.push_back({k, v, "", 0, 0});
    ResolvedSettings s = resolve_settings(given);
    s.settings.files = {source("demo-data/" + run.file)};
    StringSink sink;
    run_rates(s, sink);
    const Table t = parse_table("rates.csv", sink.text().at("rates"));
    const auto fl = static_cast<std::size_t>(t.column("flags")), no = static_cast<std::size_t>(t.column("notes"));
    REQUIRE(t.column("flags") >= 0);
    for (const auto& row : t.rows) {
      for (const auto& w : split_cells(row[fl])) {
        CHECK_MESSAGE(find_mark(w, MarkKind::flag) != nullptr, "flag not in the table: ", w);
        seen.insert("flag " + w);
      }
      for (const auto& w : split_cells(row[no])) {
        CHECK_MESSAGE(find_mark(w, MarkKind::note) != nullptr, "note not in the table: ", w);
        seen.insert("note " + w);
      }
    }
  }
  CHECK(seen.size() >= 5);  // the demo plates do raise flags and notes (a test that reads something)
}

TEST_CASE("the README lists exactly the table, and --help prints it") {
  const std::string readme = slurp(source("README.md"));
  CHECK_MESSAGE(readme.find(marks_markdown(MarkKind::flag)) != std::string::npos,
                "README's flag table differs from include/vzero/flags.hpp; paste vzero::marks_markdown(flag):\n",
                marks_markdown(MarkKind::flag));
  CHECK_MESSAGE(readme.find(marks_markdown(MarkKind::note)) != std::string::npos,
                "README's note table differs; paste vzero::marks_markdown(note):\n", marks_markdown(MarkKind::note));
  const auto help = run_vzero("rates --help", ".");
  REQUIRE(help.status == 0);
  for (const MarkInfo& m : mark_table()) CHECK(help.out.find("  " + std::string(m.word) + " ") != std::string::npos);
  // Every word once per kind.
  std::set<std::string> keys;
  for (const MarkInfo& m : mark_table())
    CHECK(keys.insert(std::string(to_string(m.kind)) + " " + std::string(m.word)).second);
}
