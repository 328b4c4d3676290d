// The vzero program as a user runs it: help, errors and exit codes, the rates outputs.
#include <fmt/format.h>
#include <signal.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>
#include <algorithm>
#include <nlohmann/json.hpp>
#include <sstream>

#include "test_support.hpp"
#include "vzero/table.hpp"

using namespace vzero::test;

namespace {
const std::string k_demo = "'" + source("demo-data") + "'";
std::string demo(const std::string& f) { return "'" + source("demo-data/" + f) + "'"; }
}  // namespace

TEST_CASE("help explains every command and option") {
  auto top = run_vzero("--help");
  INFO(top.describe());
  CHECK(top.status == 0);
  CHECK(top.out.find("inspect FILE") != std::string::npos);
  for (const char* cmd : {"inspect", "rates"}) {
    auto r = run_vzero(std::string(cmd) + " --help");
    INFO(r.describe());
    CHECK(r.status == 0);
    CHECK(r.out.find("usage: vzero") != std::string::npos);
  }
  auto rates = run_vzero("rates --help");
  for (const char* opt :
       {"--layout",     "--method",     "--epsilon",        "--path-cm",   "--volume-ul",     "--well-diameter-mm",
        "--water-peak", "--standards",  "--signal-only",    "--blank",     "--blank-mode",    "--direction",
        "--skip-s",     "--min-points", "--max-conversion", "--estimator", "--window",        "--traces",
        "--summary",    "--threads",    "--signal-ceiling", "--conc-unit", "--well-volume-ul"}) {
    CAPTURE(opt);
    CHECK(rates.out.find(opt) != std::string::npos);
  }
  CHECK(rates.out.find("nadh-340") != std::string::npos);
}

TEST_CASE("bad usage exits 2, bad input exits 1, each with a message") {
  auto unknown = run_vzero("rates x.csv --layout m.csv --colour red");
  INFO(unknown.describe());
  CHECK(unknown.status == 2);
  CHECK(unknown.err == "vzero rates: unrecognised option '--colour'\n  see: vzero rates --help\n");
  // A mistyped option gets the nearest one named (2 edits or fewer).
  auto typo = run_vzero("rates x.csv --layot m.csv");
  CHECK(typo.status == 2);
  CHECK(typo.err == "vzero rates: unrecognised option '--layot'; did you mean --layout?\n  see: vzero rates --help\n");
  auto swapped = run_vzero("fit r.csv --x substrate --modle mm");
  CHECK(swapped.err == "vzero fit: unrecognised option '--modle'; did you mean --model?\n  see: vzero fit --help\n");
  auto far = run_vzero("rates x.csv --layout m.csv --temperature 30");  // nothing close: no guess
  CHECK(far.err == "vzero rates: unrecognised option '--temperature'\n  see: vzero rates --help\n");
  auto nofile = run_vzero("inspect no-such-file.csv");
  INFO(nofile.describe());
  CHECK(nofile.status == 1);
  CHECK(nofile.err ==
        "no-such-file.csv: cannot open no-such-file.csv: No such file or directory\n"
        "  possible fix: check the path and that the file is readable\n");
  auto nolayout = run_vzero("rates " + demo("hydrolase_wide.csv"));
  CHECK(nolayout.status == 2);
  CHECK(nolayout.err.find("--layout MAP.csv is required") != std::string::npos);
  auto badnum = run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") +
                          " --epsilon abc --path-cm 0.5");
  CHECK(badnum.status == 2);
  CHECK(badnum.err == "vzero rates: --epsilon is \"abc\"; expected a number above 0\n  see: vzero rates --help\n");
  auto cmd = run_vzero("frobnicate");
  CHECK(cmd.status == 2);
}

TEST_CASE("inspect reports what it read") {
  auto r = run_vzero("inspect " + demo("hydrolase_grid.txt"));
  INFO(r.describe());
  CHECK(r.status == 0);
  CHECK(r.out.find("shape     grid") != std::string::npos);
  CHECK(r.out.find("profile   grid-generic (built-in; detected") != std::string::npos);
  CHECK(r.out.find("reads   61, from 0 s to 600 s") != std::string::npos);
  CHECK(r.out.find("overflow 39 in A12 (39)") != std::string::npos);
  CHECK(r.out.find("temperature 24.9–25.1 °C") != std::string::npos);
}

TEST_CASE("rates on the demo plate: every well a row, provenance, byte-identical for any thread count") {
  TempDir dir;
  std::string common = "rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") + " --method " +
                       demo("esterase_method.toml") + " --summary summary.csv --traces traces.csv";
  auto one = run_vzero(common + " -o one.csv --threads 1", dir.path.string());
  INFO(one.describe());
  REQUIRE(one.status == 0);
  std::string first = slurp(dir / "one.csv");
  std::string package = slurp(dir / "datapackage.json");
  auto two = run_vzero(common + " -o two.csv --threads 2", dir.path.string());
  REQUIRE(two.status == 0);
  CHECK(first == slurp(dir / "two.csv"));
  vzero::Table t = vzero::read_table(dir / "one.csv");
  CHECK(t.rows.size() == 96);
  CHECK(t.header.at(0) == "source");
  CHECK(t.column("v0_unit") >= 0);
  CHECK(t.rows[0][static_cast<std::size_t>(t.column("v0_unit"))] == "uM/min");
  vzero::Table traces = vzero::read_table(dir / "traces.csv");
  CHECK(traces.rows.size() == 96 * 61);
  auto j = nlohmann::json::parse(package);
  CHECK(j["profile"] == "tabular-data-package");
  CHECK(j["resources"][0]["path"] == "one.csv");
  CHECK(j["vzero"]["inputs"][0]["kind"] == "plate-map");
  bool found = false;
  for (const auto& in : j["vzero"]["inputs"]) {
    if (in["kind"] == "export") {
      found = true;
      // sha256 of demo-data/hydrolase_wide.csv, as `sha256sum` prints it (coreutils).
      CHECK(in["sha256"].get<std::string>().size() == 64);
    }
  }
  CHECK(found);
  CHECK(j["vzero"]["options"]["epsilon"] == "18000");
  CHECK(j["vzero"]["options"]["blank"] == "matched");
  // The map's substrate is in --conc-unit (uM by default): the schema says so, and vzero fit
  // gives Km that unit from the package beside the table (two.csv, the package's last run).
  int with_unit = 0;
  for (const auto& f : j["resources"][0]["schema"]["fields"])
    if (f["name"] == "substrate") with_unit += f.value("unit", "") == "uM";
  CHECK(with_unit == 1);
  auto fit = run_vzero(
      "fit two.csv --x substrate --inhibitor inhibitor_uM --model competitive --group enzyme_nM -o fit.csv --quiet",
      dir.path.string());
  INFO(fit.describe());
  REQUIRE(fit.status == 0);
  vzero::Table ft = vzero::read_table(dir / "fit.csv");
  int km_rows = 0;
  for (const auto& row : ft.rows)
    if (row[static_cast<std::size_t>(ft.column("parameter"))] == "Km") {
      ++km_rows;
      CHECK(row[static_cast<std::size_t>(ft.column("unit"))] == "uM");
    }
  CHECK(km_rows == 1);
}

TEST_CASE("command-line flags override the method file; method-file mistakes name the line") {
  TempDir dir;
  spit(dir / "m.toml", "epsilon = 18000\npath-cm = 0.5\nblank = \"sideways\"\n");
  auto r =
      run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") + " --method m.toml",
                dir.path.string());
  INFO(r.describe());
  CHECK(r.status == 1);
  CHECK(r.err ==
        "m.toml:3:1: method key `blank` is \"sideways\"; use plate, matched or none\n"
        "  possible fix: correct the value in the method file, or remove the key to use the default\n");
  auto ok = run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") +
                          " --method m.toml --blank plate -q",
                      dir.path.string());
  CHECK(ok.status == 0);
  spit(dir / "typo.toml", "epsilom = 18000\n");
  auto typo = run_vzero(
      "rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") + " --method typo.toml",
      dir.path.string());
  CHECK(typo.status == 1);
  CHECK(typo.err ==
        "typo.toml:1:1: unknown method key `epsilom`\n"
        "  possible fixes:\n"
        "    - did you mean `epsilon`?\n"
        "    - method keys are the long option names of vzero rates (see vzero rates --help)\n");
}

TEST_CASE("a failed write leaves no partial file and an old output intact") {
  TempDir dir;
  std::string base = "rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") + " -q";
  auto full = run_vzero(base + " -o /dev/full", dir.path.string());
  CHECK(full.status == 1);
  CHECK(full.err.find("cannot write /dev/full: No space left on device") != std::string::npos);
  auto missing = run_vzero(base + " -o no-such-dir/rates.csv", dir.path.string());
  CHECK(missing.status == 1);
  CHECK(missing.err ==
        "no-such-dir/rates.csv: cannot write no-such-dir/rates.csv: the folder no-such-dir does not exist\n"
        "  possible fix: create it first (mkdir -p no-such-dir) or choose another output path\n");
  spit(dir / "rates.csv", "old\n");
  auto bad = run_vzero(base + " -o rates.csv --traces /dev/full", dir.path.string());
  CHECK(bad.status == 1);
  // rates.csv was replaced whole before the traces failed; no temporary files remain.
  int leftovers = 0;
  for (const auto& e : std::filesystem::directory_iterator(dir.path))
    leftovers += e.path().filename().string().find(".tmp") != std::string::npos;
  CHECK(leftovers == 0);
}

TEST_CASE("no output replaces an input or another output; a missing output folder is found before any reading") {
  TempDir dir;
  const std::string wide = dir.path / "plate.csv", map = dir.path / "map.csv", method = dir.path / "m.toml";
  spit(wide, slurp(source("demo-data/hydrolase_wide.csv")));
  spit(map, slurp(source("demo-data/hydrolase_map.csv")));
  spit(method, "signal-only = true\n");
  const std::string base = "rates plate.csv --layout map.csv --method m.toml -q";
  struct Case {
    std::string args, err;
  };
  const std::vector<Case> cases = {
      {" -o plate.csv",
       "vzero rates: --output (plate.csv) is the export plate.csv; vzero never overwrites an input: "
       "choose another output path\n  see: vzero rates --help\n"},
      {" -o map.csv",
       "vzero rates: --output (map.csv) is the plate map (--layout) map.csv; vzero never overwrites an "
       "input: choose another output path\n  see: vzero rates --help\n"},
      {" --summary ./m.toml",
       "vzero rates: --summary (./m.toml) is the method file (--method) m.toml; vzero never "
       "overwrites an input: choose another output path\n  see: vzero rates --help\n"},
      {" -o r.csv --traces ./r.csv",
       "vzero rates: --output and --traces both name ./r.csv; each output needs its own "
       "file\n  see: vzero rates --help\n"},
      {" -o datapackage.json",
       "vzero rates: --output and datapackage.json (written beside --output) both name "
       "datapackage.json; each output needs its own file\n  see: vzero rates --help\n"},
  };
  for (const auto& c : cases) {
    auto r = run_vzero(base + c.args, dir.path.string());
    INFO(r.describe());
    CHECK(r.status == 2);
    CHECK(r.err == c.err);
  }
  // A link to an input is the input.
  std::filesystem::create_symlink(wide, dir.path / "link.csv");
  auto link = run_vzero(base + " -o link.csv", dir.path.string());
  CHECK(link.status == 2);
  CHECK(link.err.find("--output (link.csv) is the export plate.csv") != std::string::npos);
  // Nothing was replaced.
  CHECK(slurp(wide) == slurp(source("demo-data/hydrolase_wide.csv")));
  CHECK(slurp(method) == "signal-only = true\n");
  // The folder check comes before the export is read: a broken export is not reached.
  spit(dir.path / "broken.csv", "Time [s],A1\n0,abc\n");
  auto folder = run_vzero("rates broken.csv --layout map.csv -q -o nowhere/r.csv", dir.path.string());
  CHECK(folder.status == 1);
  CHECK(folder.err.rfind("nowhere/r.csv: cannot write nowhere/r.csv: the folder nowhere does not exist", 0) == 0);
  // vzero fit onto its own table.
  auto ok = run_vzero(base + " -o rates.csv", dir.path.string());
  REQUIRE(ok.status == 0);
  auto fit = run_vzero("fit rates.csv --x substrate -o rates.csv", dir.path.string());
  CHECK(fit.status == 2);
  CHECK(fit.err ==
        "vzero fit: -o (rates.csv) is the table rates.csv; vzero never overwrites an input: choose another "
        "output path\n  see: vzero fit --help\n");
}

TEST_CASE("every output, datapackage.json and the report included, is the same for any thread count") {
  TempDir dir;
  const std::string base = "rates " + demo("hydrolase_wide.csv") + " " + demo("hydrolase_grid.txt") + " --layout " +
                           demo("hydrolase_map.csv") + " --method " + demo("esterase_method.toml") + " -q";
  for (const char* threads : {"1", "2"}) {
    std::filesystem::create_directories(dir.path / threads);
    auto r = run_vzero(base + " --threads " + threads + " -o " + threads + "/rates.csv --traces " + threads +
                           "/traces.csv --summary " + threads + "/summary.csv --report " + threads + "/report.html",
                       dir.path.string());
    INFO(r.describe());
    REQUIRE(r.status == 0);
  }
  for (const char* f : {"rates.csv", "traces.csv", "summary.csv", "datapackage.json", "report.html"}) {
    CAPTURE(f);
    CHECK(slurp((dir.path / "1" / f).string()) == slurp((dir.path / "2" / f).string()));
  }
  // The thread count is not recorded (it cannot change a result).
  CHECK(slurp((dir.path / "1" / "datapackage.json").string()).find("\"threads\"") == std::string::npos);
}

TEST_CASE("a prefix of an option or a mistyped command is never guessed, only suggested") {
  auto prefix = run_vzero("rates x.csv --layout m.csv --path 0.56");
  CHECK(prefix.status == 2);
  CHECK(prefix.err ==
        "vzero rates: unrecognised option '--path'; did you mean --path-cm?\n  see: vzero rates --help\n");
  auto command = run_vzero("rate x.csv");
  CHECK(command.status == 2);
  CHECK(command.err ==
        "vzero: unknown command \"rate\"; did you mean rates? commands are inspect, rates, fit, progress, report, profile, "
        "merge (see "
        "vzero "
        "--help)\n");
}

TEST_CASE("control characters from an input are shown escaped in messages") {
  TempDir dir;
  spit(dir / "map.csv", "well,role\nA1,sam\x1b[31mple\x07\n");
  auto r = run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout map.csv -q", dir.path.string());
  CHECK(r.status == 1);
  CHECK(r.err.find('\x1b') == std::string::npos);
  CHECK(r.err.find('\x07') == std::string::npos);
  CHECK(r.err.find("sam\\x1b[31mple\\x07") != std::string::npos);
}

TEST_CASE("a replaced output keeps its permissions; an interrupted run leaves no temporary file") {
  TempDir dir;
  const std::string base = "rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") + " -q";
  spit(dir / "rates.csv", "old\n");
  std::filesystem::permissions(dir / "rates.csv",
                               std::filesystem::perms::owner_read | std::filesystem::perms::owner_write);
  auto r = run_vzero(base + " -o rates.csv", dir.path.string());
  REQUIRE(r.status == 0);
  CHECK(std::filesystem::status(dir / "rates.csv").permissions() ==
        (std::filesystem::perms::owner_read | std::filesystem::perms::owner_write));
  CHECK(slurp(dir / "rates.csv") != "old\n");

  // The second export is a pipe nobody writes to: the run finishes the first file (its
  // temporary rates file exists), then waits; SIGTERM must remove that file.
  REQUIRE(::mkfifo((dir / "pipe.csv").c_str(), 0600) == 0);
  const std::string cmd = "cd '" + dir.path.string() + "' && exec '" + VZERO_BINARY + "' rates " +
                          demo("hydrolase_wide.csv") + " pipe.csv --layout " + demo("hydrolase_map.csv") +
                          " --threads 1 -q -o interrupted.csv";
  const pid_t pid = ::fork();
  REQUIRE(pid >= 0);
  if (pid == 0) {
    ::execl("/bin/sh", "sh", "-c", cmd.c_str(), static_cast<char*>(nullptr));
    ::_exit(127);
  }
  auto temps = [&] {
    int n = 0;
    for (const auto& e : std::filesystem::directory_iterator(dir.path))
      n += e.path().filename().string().ends_with(".tmp");
    return n;
  };
  int waited_ms = 0;
  while (temps() == 0 && waited_ms < 20000) {
    ::usleep(20000);
    waited_ms += 20;
  }
  REQUIRE(temps() == 1);  // the first file's rows are in a temporary file
  ::kill(pid, SIGTERM);
  int status = 0;
  ::waitpid(pid, &status, 0);
  CHECK(WIFSIGNALED(status));
  CHECK(WTERMSIG(status) == SIGTERM);
  CHECK(temps() == 0);
  CHECK(!std::filesystem::exists(dir / "interrupted.csv"));
}

TEST_CASE("the console digest prints no nan for a condition with one clean well") {
  TempDir dir;
  auto r = run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") + " --method " +
                         demo("esterase_method.toml"),
                     dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  CHECK(r.out.find("nan") == std::string::npos);
  // A12 alone at ten times the enzyme: one well, so no SD (invented demo plate).
  CHECK(r.out.find("uM/min (n 1)") != std::string::npos);
}

namespace {
// The demo map with each well its own condition (group = the well's name).
std::string map_one_condition_per_well() {
  std::istringstream in(slurp(source("demo-data/hydrolase_map.csv")));
  std::string out, line;
  while (std::getline(in, line)) {
    if (line.empty() || line[0] == '#' || line.rfind("well,", 0) == 0) {
      out += line + "\n";
      continue;
    }
    std::vector<std::string> cell;
    std::stringstream ss(line);
    for (std::string c; std::getline(ss, c, ',');) cell.push_back(c);
    cell.resize(7);
    cell[4] = "w" + cell[0];  // group column
    for (std::size_t i = 0; i < cell.size(); ++i) out += (i ? "," : "") + cell[i];
    out += "\n";
  }
  return out;
}
}  // namespace

TEST_CASE("the console digest stays short: many conditions give the fastest and slowest few") {
  TempDir dir;
  spit((dir.path / "map.csv").string(), map_one_condition_per_well());
  auto r = run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout map.csv --method " +
                         demo("esterase_method.toml") + " --summary summary.csv",
                     dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  CHECK(std::count(r.out.begin(), r.out.end(), '\n') <= 30);
  CHECK(r.out.find("the 5 fastest") != std::string::npos);
  CHECK(r.out.find("every condition: summary.csv") != std::string::npos);
  // The first condition listed is the fastest in summary.csv (its mean, printed to 4 digits).
  const vzero::Table t = vzero::parse_table("summary.csv", slurp((dir.path / "summary.csv").string()));
  const int role = t.column("role"), mean = t.column("v0_mean"), group = t.column("group");
  double best = -1;
  std::string best_group;
  for (std::size_t i = 0; i < t.rows.size(); ++i) {
    const auto v = t.number(i, mean);
    if (t.rows[i][static_cast<std::size_t>(role)] == "sample" && v && *v > best) {
      best = *v;
      best_group = t.rows[i][static_cast<std::size_t>(group)];
    }
  }
  const auto first = r.out.find("fastest:\n");
  REQUIRE(first != std::string::npos);
  const std::string line = r.out.substr(first + 9, r.out.find('\n', first + 9) - first - 9);
  CHECK(line.find("group=" + best_group + " ") != std::string::npos);
  CHECK(line.find(fmt::format("{:.4g} uM/min", best)) != std::string::npos);
}

TEST_CASE("--summary-per-file keeps the exports apart in the summary") {
  TempDir dir;
  const std::string wide = slurp(source("demo-data/hydrolase_wide.csv"));
  spit((dir.path / "day1.csv").string(), wide);
  spit((dir.path / "day2.csv").string(), wide);
  const std::string common = " --layout " + demo("hydrolase_map.csv") + " --method " + demo("esterase_method.toml");
  auto pooled =
      run_vzero("rates day1.csv day2.csv -o pooled.csv --summary pooled_summary.csv -q" + common, dir.path.string());
  auto apart =
      run_vzero("rates day1.csv day2.csv -o apart.csv --summary apart_summary.csv -q --summary-per-file" + common,
                dir.path.string());
  INFO(pooled.describe(), apart.describe());
  REQUIRE(pooled.status == 0);
  REQUIRE(apart.status == 0);
  const vzero::Table p = vzero::parse_table("pooled", slurp((dir.path / "pooled_summary.csv").string()));
  const vzero::Table a = vzero::parse_table("apart", slurp((dir.path / "apart_summary.csv").string()));
  CHECK(p.column("source") == -1);
  REQUIRE(a.header.front() == "source");
  // Twice the groups, each half the wells of its pooled twin, and the same means (the two
  // files are the same bytes).
  CHECK(a.rows.size() == 2 * p.rows.size());
  const int pw = p.column("wells"), aw = a.column("wells"), pm = p.column("v0_mean"), am = a.column("v0_mean");
  for (std::size_t i = 0; i < p.rows.size(); ++i) {
    const std::string pooled_wells = p.rows[i][static_cast<std::size_t>(pw)];
    const std::string one_file = a.rows[i][static_cast<std::size_t>(aw)];
    CHECK(pooled_wells == one_file + ";" + one_file);
    CHECK(a.rows[i][0] == "day1.csv");
    const auto pv = p.number(i, pm), av = a.number(i, am);
    CHECK(pv.has_value() == av.has_value());
    if (pv && av) CHECK(*pv == doctest::Approx(*av).epsilon(1e-12));
  }
}

TEST_CASE("--files-from reads the exports from a list, as if they were typed") {
  TempDir dir;
  const std::string wide = source("demo-data/hydrolase_wide.csv"), lng = source("demo-data/hydrolase_long.csv");
  spit((dir.path / "list.txt").string(), "# a job's exports\n\n  " + wide + "  \r\n" + lng + "\n");
  const std::string common = " --layout " + demo("hydrolase_map.csv") + " --method " + demo("esterase_method.toml");
  auto typed = run_vzero("rates '" + wide + "' '" + lng + "' -o typed.csv -q" + common, dir.path.string());
  auto listed = run_vzero("rates --files-from list.txt -o listed.csv -q" + common, dir.path.string());
  INFO(typed.describe(), listed.describe());
  REQUIRE(typed.status == 0);
  REQUIRE(listed.status == 0);
  CHECK(slurp((dir.path / "typed.csv").string()) == slurp((dir.path / "listed.csv").string()));
  // The list is an input of the run: recorded with its checksum.
  const auto pkg = nlohmann::json::parse(slurp((dir.path / "datapackage.json").string()));
  int lists = 0;
  for (const auto& in : pkg["vzero"]["inputs"]) lists += in["kind"] == "file-list";
  CHECK(lists == 1);
  // A list that names nothing, and a list that is not there, are errors naming the file.
  spit((dir.path / "empty.txt").string(), "# nothing yet\n\n");
  auto empty = run_vzero("rates --files-from empty.txt -o e.csv" + common, dir.path.string());
  CHECK(empty.status == 1);
  CHECK(empty.err.rfind("empty.txt:1:1: the file list names no export", 0) == 0);
  auto missing = run_vzero("rates --files-from nope.txt -o m.csv" + common, dir.path.string());
  CHECK(missing.status == 1);
  CHECK(missing.err.find("nope.txt") != std::string::npos);
}
