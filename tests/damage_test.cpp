// Nothing dropped, as a property: the demo exports and the test fixtures of each shape, each
// damaged on one line (deleted, duplicated, blanked, text inserted before it, its first field
// replaced by an off-plate row label, cut in half, its delimiter swapped), 1,100 damaged files
// from a fixed seed. Each either fails with an InputError naming the damaged line (or the
// line next to it: a missing line shows at the line after it), or reads every read of the
// undamaged file with its value and status, but for reads on the damaged line: those of one
// read time, whose values are on that line (or all of that time's reads, when the line is a
// grid read label).
#include <fmt/format.h>
#include <re2/re2.h>

#include <map>
#include <random>
#include <set>
#include <sstream>

#include "core/text.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"

using namespace vzero;

namespace {

const char* const k_files[] = {"demo-data/hydrolase_wide.csv",           "demo-data/hydrolase_long.csv",
                               "demo-data/hydrolase_grid.txt",           "demo-data/protease_fluor_wide.csv",
                               "demo-data/hydrolase_wide_semicolon.csv", "demo-data/hydrolase_wide_waterpeak.csv",
                               "tests/bad-inputs/pass_lf_wide.csv",      "tests/bad-inputs/pass_lf_long.csv",
                               "tests/bad-inputs/pass_lf_grid.txt",      "tests/bad-inputs/pass_lf_wide_semicolon.csv",
                               "tests/bad-inputs/pass_crlf_long.csv"};
constexpr int k_per_file = 100;

// (channel index, plate index, time) -> (status, value)
using Reads = std::map<std::tuple<std::size_t, int, double>, std::pair<ReadStatus, double>>;

Reads reads_of(const Run& run) {
  Reads out;
  for (std::size_t c = 0; c < run.channels.size(); ++c) {
    const Channel& ch = run.channels[c];
    for (Eigen::Index j = 0; j < ch.status.cols(); ++j)
      for (Eigen::Index i = 0; i < ch.status.rows(); ++i) {
        const ReadStatus s = ch.status(i, j);
        out[{c, ch.wells[static_cast<std::size_t>(j)], ch.time_s[static_cast<std::size_t>(i)]}] = {
            s, s == ReadStatus::ok ? ch.values(i, j) : 0.0};
      }
  }
  return out;
}

std::vector<std::string> split_lines(const std::string& text) {
  std::vector<std::string> lines;
  std::stringstream ss(text);
  for (std::string l; std::getline(ss, l);) lines.push_back(l);
  return lines;
}

std::string join(const std::vector<std::string>& lines) {
  std::string s;
  for (const auto& l : lines) s += l + "\n";
  return s;
}

// The numbers on a line, whatever its delimiter and decimal mark.
std::set<double> numbers_on(std::string line, char decimal) {
  for (char& c : line)
    if (c == ';' || c == '\t' || (c == ',' && decimal == '.')) c = ' ';
  std::set<double> out;
  std::stringstream ss(line);
  for (std::string tok; ss >> tok;)
    if (auto v = detail::parse_number(tok, decimal)) out.insert(*v);
  return out;
}

struct Damage {
  std::vector<std::string> lines;
  int line = 0;          // 1-based line damaged, in the damaged file
  std::string original;  // the undamaged text of a damaged or deleted line ("" for an insertion)
  std::string kind;
};

Damage damage(const std::vector<std::string>& lines, std::mt19937& rng, char delimiter) {
  Damage d{lines, static_cast<int>(rng() % lines.size()) + 1, "", ""};
  const auto at = static_cast<std::size_t>(d.line - 1);
  d.original = lines[at];
  switch (rng() % 7) {
    case 0:
      d.kind = "delete";
      d.lines.erase(d.lines.begin() + static_cast<std::ptrdiff_t>(at));
      break;
    case 1:
      d.kind = "duplicate";
      d.lines.insert(d.lines.begin() + static_cast<std::ptrdiff_t>(at), lines[at]);
      d.original.clear();
      break;
    case 2:
      d.kind = "blank";
      d.lines[at].clear();
      break;
    case 3: {
      static const char* const text[] = {"instrument paused", "Note: lamp check", "# comment", "end"};
      d.kind = "insert text";
      d.lines.insert(d.lines.begin() + static_cast<std::ptrdiff_t>(at), text[rng() % 4]);
      d.original.clear();
      break;
    }
    case 4: {
      static const char* const label[] = {"AG", "B.", "E:", "?"};
      d.kind = "mangle row label";
      const std::size_t end = d.lines[at].find_first_of(",;\t");
      d.lines[at] = label[rng() % 4] + (end == std::string::npos ? std::string() : d.lines[at].substr(end));
      break;
    }
    case 5:
      d.kind = "truncate";
      d.lines[at].resize(d.lines[at].size() / 2);
      break;
    default:
      d.kind = "swap delimiter";
      for (char& c : d.lines[at])
        if (c == delimiter) c = delimiter == ',' ? ';' : ',';
      break;
  }
  return d;
}

// Empty when the damaged read keeps every read not on the damaged line; else what was lost.
std::string lost_reads(const Reads& before, const Reads& after, const Damage& d, const Profile& p) {
  std::set<double> times;
  std::vector<std::pair<ReadStatus, double>> lost;
  std::size_t at_time = 0;
  for (const auto& [k, v] : before) {
    auto it = after.find(k);
    if (it != after.end() && it->second == v) continue;
    times.insert(std::get<2>(k));
    lost.push_back(v);
  }
  for (const auto& [k, v] : after)
    if (!before.count(k)) times.insert(std::get<2>(k));
  if (lost.empty() && times.empty()) return "";
  if (times.size() > 1) return fmt::format("reads at {} times changed", times.size());
  for (const auto& [k, v] : before) at_time += std::get<2>(k) == *times.begin();
  const bool label_line =
      p.shape == Shape::grid && !d.original.empty() && RE2::PartialMatch(d.original, p.grid_read_label);
  if (label_line && lost.size() == at_time) return "";
  const std::set<double> on_line = numbers_on(d.original, p.decimal);
  for (const auto& [s, v] : lost)
    if (s == ReadStatus::ok && !on_line.count(v)) return fmt::format("a read of value {} not on the damaged line", v);
  return "";
}

}  // namespace

TEST_CASE("any single-line damage to an export either fails at that line or loses no read of another line") {
  std::mt19937 rng(20261202);  // fixed seed: the same 1,100 damaged files every run
  int cases = 0, refused = 0, read = 0;
  for (const char* name : k_files) {
    const std::string path = test::source(name);
    const Profile p = choose_profile(path, "").profile;
    const std::string text = test::slurp(path);
    const Reads before = reads_of(read_run_text(name, text, p));
    std::vector<std::string> lines = split_lines(text);
    for (auto& l : lines)
      if (!l.empty() && l.back() == '\r') l.pop_back();
    const char delimiter = p.delimiter ? p.delimiter : detail::guess_delimiter(lines[lines.size() / 2]);
    for (int k = 0; k < k_per_file; ++k, ++cases) {
      const Damage d = damage(lines, rng, delimiter);
      INFO(name, ": ", d.kind, " at line ", d.line, ": \"", d.original, "\"");
      try {
        const Run run = read_run_text(name, join(d.lines), p);
        const std::string why = lost_reads(before, reads_of(run), d, p);
        CHECK_MESSAGE(why.empty(), why);
        ++read;
      } catch (const InputError& e) {
        INFO("error at line ", e.where().line, ": ", e.message());
        CHECK(e.where().line >= d.line - 1);
        CHECK(e.where().line <= d.line + 1);
        ++refused;
      }
    }
  }
  CHECK(cases >= 1000);
  MESSAGE(fmt::format("{} damaged files: {} refused at their line, {} read with nothing lost", cases, refused, read));
}
