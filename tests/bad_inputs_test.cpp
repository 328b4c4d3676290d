// The malformed-input suite: tests/bad-inputs/ holds hand-made inputs whose names state the
// expected outcome (fail_* must be refused, pass_* must be read), and expected.tsv says, for
// each, the command, the exit status and the message. Every case runs the real vzero binary
// in a temporary folder holding a copy of the suite, the way a user would run it, and a
// failure prints the command, its stdout and its stderr.
//
// A fail_* case must exit 1, print exactly the expected first line (file:line:column: what
// was expected, what was found) and offer the expected fix. A pass_* case must exit 0 and,
// for "same-as ORIGINAL", print exactly what `inspect ORIGINAL` prints (CRLF, BOM and
// missing-final-newline variants read like the LF original). Inputs named "generated:…" are
// too big to commit (10 MB and 17 MiB lines) or are variants of the demo data; the test
// writes them first.
#include <algorithm>
#include <cctype>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"
#include "vzero/plate_map.hpp"

using namespace vzero::test;
namespace fs = std::filesystem;

namespace {

const std::string k_suite = source("tests/bad-inputs");

struct Case {
  std::string file;     // name in the suite (or "generated:NAME")
  std::string command;  // vzero arguments; {file} is the input, {demo} the demo-data folder
  int status = 0;
  std::string expect;  // fail: first stderr line; pass: "same-as FILE" or "stdout-has TEXT"
  std::string fix;     // fail: text of one "possible fix" line
  int tsv_line = 0;
};

std::vector<std::string> split_tabs(const std::string& line) {
  std::vector<std::string> out;
  std::string cell;
  std::istringstream in(line);
  while (std::getline(in, cell, '\t')) out.push_back(cell);
  return out;
}

std::vector<Case> read_cases() {
  std::ifstream in(k_suite + "/expected.tsv");
  REQUIRE(in.good());
  std::vector<Case> cases;
  std::string line;
  int n = 0;
  while (std::getline(in, line)) {
    ++n;
    if (line.empty() || line[0] == '#') continue;
    auto cells = split_tabs(line);
    INFO("expected.tsv line " << n << ": " << line);
    REQUIRE(cells.size() >= 4);
    Case c;
    c.file = cells[0];
    c.command = cells[1];
    c.status = std::stoi(cells[2]);
    c.expect = cells[3];
    c.fix = cells.size() > 4 ? cells[4] : "";
    c.tsv_line = n;
    cases.push_back(c);
  }
  return cases;
}

std::string name_of(const Case& c) {
  const std::string g = "generated:";
  return c.file.rfind(g, 0) == 0 ? c.file.substr(g.size()) : c.file;
}

std::string replace_all(std::string s, const std::string& from, const std::string& to) {
  for (std::size_t at = s.find(from); at != std::string::npos; at = s.find(from, at + to.size()))
    s.replace(at, from.size(), to);
  return s;
}

std::string to_crlf_bom(const std::string& lf) { return "\xEF\xBB\xBF" + replace_all(lf, "\n", "\r\n"); }

// The inputs too big to commit, and CRLF + BOM variants of every demo export.
std::string generate(const std::string& name) {
  const std::string wide = slurp(k_suite + "/pass_lf_wide.csv");
  if (name == "pass_line_10mb_preamble.csv") {
    // A 10 MB comment in the preamble (below the 16 MiB line limit) does not disturb the data.
    return "# " + std::string(10'000'000, 'x') + "\n" + wide;
  }
  if (name == "fail_line_10mb_header.csv") {
    // A 10 MB header line: wells A1…AF48 over and over, so A1 comes back at column 7690.
    std::string h = "Time [s]";
    while (h.size() < 10'000'000)
      for (int r = 0; r < 32; ++r)
        for (int c = 0; c < 48; ++c) h += "," + vzero::well_name(vzero::WellId{r, c});
    return "# a 10 MB header line\n" + h + "\n0,0.1\n";
  }
  if (name == "fail_line_over_16mib.csv") {
    // Line 3 is 17 MiB: beyond the longest line vzero reads.
    return "# vzero test input: line 3 is 17 MiB long\nOperator: test\n" + std::string(17u << 20, '7') + "\n" + wide;
  }
  const std::string demo = "demo_crlf_bom_";
  if (name.rfind("pass_" + demo, 0) == 0)
    return to_crlf_bom(slurp(source("demo-data/" + name.substr(5 + demo.size()))));
  FAIL("no generator for " << name);
  return {};
}

// Runs vzero in `dir` with a time limit, so a hang fails the test instead of stalling it.
CommandResult run_in(const fs::path& dir, const std::string& args) {
  TempDir io;
  CommandResult r;
  r.command = "cd '" + dir.string() + "' && vzero " + args;
  std::string full = "cd '" + dir.string() + "' && timeout -k 5 300 '" + std::string(VZERO_BINARY) + "' " + args +
                     " >'" + (io / "out") + "' 2>'" + (io / "err") + "' </dev/null";
  int rc = std::system(full.c_str());
  r.status = WIFEXITED(rc) ? WEXITSTATUS(rc) : -1;
  r.out = slurp(io / "out");
  r.err = slurp(io / "err");
  return r;
}

std::string first_line(const std::string& s) { return s.substr(0, s.find('\n')); }

bool has_fix_line(const std::string& err, const std::string& fix) {
  std::istringstream in(err);
  std::string line;
  while (std::getline(in, line))
    if (line == "  possible fix: " + fix || line == "    - " + fix) return true;
  return false;
}

// inspect's report without the lines that name the file or hash its bytes.
// The report without the file's name and checksum, and with the line numbers of the reader's
// inferences as "line N" (a variant with a longer preamble has them further down).
std::string without_identity(const std::string& report) {
  std::istringstream in(report);
  std::string line, out;
  bool read_section = false;
  while (std::getline(in, line)) {
    if (line.rfind("file ", 0) == 0 || line.rfind("sha256 ", 0) == 0) continue;
    read_section = read_section || line == "read";
    if (read_section)
      for (std::size_t at = line.find("line "); at != std::string::npos; at = line.find("line ", at + 5)) {
        std::size_t end = at + 5;
        while (end < line.size() && std::isdigit(static_cast<unsigned char>(line[end]))) ++end;
        line.replace(at + 5, end - at - 5, "N");
      }
    out += line + "\n";
  }
  return out;
}

}  // namespace

TEST_CASE("every file of tests/bad-inputs is listed in expected.tsv with an outcome its name states") {
  auto cases = read_cases();
  std::set<std::string> listed;
  int fails = 0;
  for (const auto& c : cases) {
    CAPTURE(c.file);
    std::string name = name_of(c);
    CHECK(listed.insert(name).second);  // one line per input
    if (name.rfind("fail_", 0) == 0) {
      ++fails;
      CHECK(c.status == 1);
      CHECK(!c.fix.empty());
    } else {
      REQUIRE(name.rfind("pass_", 0) == 0);
      CHECK(c.status == 0);
    }
    if (c.file == name) CHECK(fs::exists(k_suite + "/" + name));
  }
  for (const auto& e : fs::directory_iterator(k_suite)) {
    std::string name = e.path().filename().string();
    if (name == "expected.tsv" || name == "README.md" || name.rfind("use_", 0) == 0) continue;
    CAPTURE(name);
    CHECK(listed.count(name) == 1);
  }
  CHECK(fails >= 40);
}

TEST_CASE("each bad input is refused with its file:line:column, what was wrong and a fix; each pass_ input reads") {
  auto cases = read_cases();
  TempDir dir;
  for (const auto& e : fs::directory_iterator(k_suite)) fs::copy(e.path(), dir.path / e.path().filename());
  for (const auto& c : cases) {
    std::string name = name_of(c);
    if (c.file != name) spit(dir / name, generate(name));
    std::string args = replace_all(replace_all(c.command, "{file}", "'" + name + "'"), "{demo}", source("demo-data"));
    CommandResult r = run_in(dir.path, args);
    INFO("case " << name << " (expected.tsv line " << c.tsv_line << ")\n" << r.describe());
    CHECK(r.status == c.status);
    if (c.status != 0) {
      CHECK(first_line(r.err) == replace_all(c.expect, "{demo}", source("demo-data")));
      CHECK(has_fix_line(r.err, c.fix));
      continue;
    }
    if (c.expect.rfind("same-as ", 0) == 0) {
      std::string original = replace_all(c.expect.substr(8), "{demo}", source("demo-data"));
      CommandResult o = run_in(dir.path, replace_all(args, "'" + name + "'", "'" + original + "'"));
      INFO("original:\n" << o.describe());
      CHECK(o.status == 0);
      CHECK(without_identity(r.out) == without_identity(o.out));
      if (c.command.rfind("inspect", 0) == 0) CHECK(r.out.find("sha256") != std::string::npos);
    } else {
      REQUIRE(c.expect.rfind("stdout-has ", 0) == 0);
      CHECK(r.out.find(c.expect.substr(11)) != std::string::npos);
    }
    if (c.file != name) fs::remove(dir / name);
  }
}

TEST_CASE("CRLF, BOM and LF variants of a plate map and of each shape read into identical models") {
  // Through the library, field by field: the binary's report above could hide a difference
  // in a value it does not print.
  auto same_map = [](const std::string& a, const std::string& b) {
    auto x = vzero::parse_plate_map("a", slurp(k_suite + "/" + a));
    auto y = vzero::parse_plate_map("b", slurp(k_suite + "/" + b));
    CHECK(x.columns == y.columns);
    REQUIRE(x.wells.size() == y.wells.size());
    for (const auto& [w, info] : x.wells) {
      const auto* other = y.find(w);
      REQUIRE(other != nullptr);
      CHECK(info.role == other->role);
      CHECK(info.values == other->values);
      CHECK(info.line == other->line);
      CHECK((info.substrate == other->substrate || (std::isnan(info.substrate) && std::isnan(other->substrate))));
    }
  };
  same_map("pass_lf_map.csv", "pass_bom_crlf_map.csv");
  auto same_run = [](const std::string& a, const std::string& b, const std::string& profile) {
    auto p = vzero::load_profile(profile);
    auto x = vzero::read_run_text("a", slurp(k_suite + "/" + a), p);
    auto y = vzero::read_run_text("b", slurp(k_suite + "/" + b), p);
    CHECK(x.metadata == y.metadata);
    CHECK(x.format == y.format);
    REQUIRE(x.channels.size() == y.channels.size());
    for (std::size_t i = 0; i < x.channels.size(); ++i) {
      const auto& cx = x.channels[i];
      const auto& cy = y.channels[i];
      CHECK(cx.name == cy.name);
      CHECK(cx.time_s == cy.time_s);
      CHECK(cx.wells == cy.wells);
      CHECK(cx.status.cwiseEqual(cy.status).all());
      for (Eigen::Index k = 0; k < cx.values.size(); ++k)
        if (cx.status.data()[k] == vzero::ReadStatus::ok) CHECK(cx.values.data()[k] == cy.values.data()[k]);
    }
  };
  for (const char* v :
       {"pass_crlf_wide.csv", "pass_bom_wide.csv", "pass_bom_crlf_wide.csv", "pass_no_final_newline_wide.csv"}) {
    CAPTURE(v);
    same_run("pass_lf_wide.csv", v, "wide-generic");
  }
  same_run("pass_lf_grid.txt", "pass_bom_crlf_grid.txt", "grid-generic");
  same_run("pass_lf_long.csv", "pass_crlf_long.csv", "long-generic");
  same_run("pass_lf_long.csv", "pass_bom_long.csv", "long-generic");
}
