// vzero merge: the tables' rows, streamed from each run into the merged files.
#include "merge/merge_tables.hpp"

#include <fmt/format.h>

#include <cerrno>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <functional>

#include "vzero/convert.hpp"
#include "vzero/rates_run.hpp"

namespace vzero::detail {

namespace fs = std::filesystem;

std::string RunPackage::table_path(const std::string& name) const {
  for (const auto& r : pkg["resources"])
    if (r.value("name", "") == name) return (fs::path(path).parent_path() / r.value("path", "")).string();
  return {};
}

Where where_in(const RunPackage& run, const std::string& needle, const std::string& after) {
  const std::size_t from = after.empty() ? 0 : run.text.find(after);
  const std::size_t at = from == std::string::npos ? from : run.text.find(needle, from);
  if (at == std::string::npos) return Where{run.path};
  const std::size_t begin = run.text.rfind('\n', at) + 1;  // npos + 1 == 0 on the first line
  const std::size_t end = run.text.find('\n', at);
  const int line = 1 + static_cast<int>(std::count(run.text.begin(), run.text.begin() + static_cast<long>(at), '\n'));
  return Where{run.path, line, static_cast<int>(at - begin) + 1, run.text.substr(begin, end - begin)};
}

namespace {

// Reads `path` in pieces of whole lines: the first line (with its line end) to `header`, the
// rest to `body`.
void stream_lines(const std::string& path, const std::function<void(std::string_view)>& header,
                  const std::function<void(std::string_view)>& body) {
  std::ifstream in(path, std::ios::binary);
  if (!in)
    throw InputError(Where{path}, fmt::format("cannot open {}: {}", path, std::strerror(errno)),
                     {"check that the run folder holds every table its datapackage.json lists"});
  std::string buffer;
  std::vector<char> block(1 << 20);
  bool header_done = false;
  auto hand_over = [&](std::string_view whole) {
    if (!header_done) {
      const std::size_t nl = std::min(whole.find('\n'), whole.size() - 1);
      header(whole.substr(0, nl + 1));
      whole.remove_prefix(nl + 1);
      header_done = true;
    }
    if (!whole.empty()) body(whole);
  };
  while (in) {
    in.read(block.data(), static_cast<std::streamsize>(block.size()));
    buffer.append(block.data(), static_cast<std::size_t>(in.gcount()));
    const std::size_t cut = buffer.rfind('\n');
    if (cut == std::string::npos) continue;
    hand_over(std::string_view(buffer).substr(0, cut + 1));
    buffer.erase(0, cut + 1);
  }
  if (!buffer.empty()) hand_over(buffer);
}

// The first run's header line is written; any other run's must be the same text.
void take_header(std::string_view line, const std::string& file, std::string& first_header, AtomicFile& out) {
  if (first_header.empty()) {
    first_header = line;
    out.append(line);
    return;
  }
  if (line == first_header) return;
  auto shown = [](std::string_view s) { return std::string(s.substr(0, s.find_first_of("\r\n"))); };
  throw InputError(
      Where{file, 1, 1, shown(line)},
      fmt::format("expected the columns of the first run's table ({}), found other columns", shown(first_header)),
      {"merge only runs made with the same vzero and options (the header follows from them)"});
}

}  // namespace

void append_table(const std::string& file, std::string& first_header, AtomicFile& out) {
  stream_lines(
      file, [&](std::string_view h) { take_header(h, file, first_header, out); },
      [&](std::string_view rows) { out.append(rows); });
}

// What one run's rows are checked against and add up to.
struct RatesMerger::RunState {
  const RunPackage& run;
  std::set<std::pair<std::string, std::string>> signal_only;  // (source, channel) left in signal units
  std::size_t next = 0;                                       // the export whose rows come next
  std::string current;                                        // the export of the rows being read
  Wells wells;
  bool located = false;
  int source = 0, channel = 0, well = 0, role = 0, v0 = 0, v0_unit = 0, flags = 0, substrate = -1;
  std::vector<int> map;
  std::vector<std::string> values;
};

RatesMerger::RatesMerger(const RunPackage& first)
    : summary_(
          first.pkg["vzero"].value("map_columns", std::vector<std::string>{}),
          [&] {
            // summary-leave-out as the option table reads a list: comma-separated, trimmed.
            std::vector<std::string> out;
            const auto& o = first.pkg["vzero"]["options"];
            std::string text = o.contains("summary-leave-out") ? o["summary-leave-out"].get<std::string>() : "";
            for (std::size_t start = 0; start <= text.size();) {
              std::size_t end = std::min(text.find(',', start), text.size());
              auto t = text.substr(start, end - start);
              t.erase(0, t.find_first_not_of(" \t"));
              t.erase(t.find_last_not_of(" \t") + 1);
              if (!t.empty()) out.push_back(t);
              start = end + 1;
            }
            return out;
          }(),
          first.pkg["vzero"]["options"].value("summary-per-file", "false") == "true") {
  const auto& v = first.pkg["vzero"];
  map_columns_ = v.value("map_columns", std::vector<std::string>{});
  for (const auto& u : v["map_column_uses"])
    if (u.value("read_as", "") == "substrate") substrate_column_ = u.value("column", "");
  for (const auto& in : v["inputs"])
    if (in.value("kind", "") == "plate-map") map_source_ = in.value("path", "");
}

RatesMerger::~RatesMerger() = default;

void RatesMerger::row(const TableRow& r, RunState& st) {
  if (!st.located) {
    const std::string fix = "merge the outputs of `vzero rates` as it wrote them";
    st.source = r.head.require_column("source", fix);
    st.channel = r.head.require_column("channel", fix);
    st.well = r.head.require_column("well", fix);
    st.role = r.head.require_column("role", fix);
    st.v0 = r.head.require_column("v0", fix);
    st.v0_unit = r.head.require_column("v0_unit", fix);
    st.flags = r.head.require_column("flags", fix);
    for (const auto& c : map_columns_) st.map.push_back(r.head.require_column(c, fix));
    if (!substrate_column_.empty()) st.substrate = r.head.require_column(substrate_column_, fix);
    st.located = true;
  }
  const auto cell = [&](int i) { return r.cells[static_cast<std::size_t>(i)]; };
  if (cell(st.source) != st.current) {
    const auto& exports = st.run.exports;
    if (st.next >= exports.size() || exports[st.next] != cell(st.source))
      throw InputError(
          Where{r.head.source, r.line, r.columns[static_cast<std::size_t>(st.source)]},
          fmt::format("expected rows of {}, found rows of {}: rates.csv does not follow the exports "
                      "{} lists",
                      st.next < exports.size() ? exports[st.next] : "no further export", cell(st.source), st.run.path),
          {"merge the run folder as `vzero rates` wrote it, or run that part again"});
    st.current = std::string(cell(st.source));
    ++st.next;
  }
  ++rows_;
  const std::string_view role = cell(st.role);
  if (role == "empty") return;  // as summarise: wells without a plate-map role are not grouped
  st.values.clear();
  for (int i : st.map) st.values.emplace_back(cell(i));
  const std::string channel(cell(st.channel));
  const std::size_t g = summary_.group(st.current, channel, role, st.values, std::string(cell(st.v0_unit)));
  const double v0 = r.number(st.v0).value_or(NAN);
  summary_.add(g, cell(st.well), v0, cell(st.flags).empty() && !std::isnan(v0));
  const bool no_substrate = st.substrate < 0 || cell(st.substrate).empty();
  Role parsed = Role::empty;
  for (const auto& w : role_table())
    if (w.word == role) parsed = w.role;
  if (rated_as_sample(parsed) && no_substrate && !st.signal_only.count({st.current, channel})) {
    for (Wells* w : {&st.wells, &all_})
      if (w->names.emplace(cell(st.well)).second && w->first.empty()) w->first = cell(st.well);
  }
}

std::string RatesMerger::add_run(const RunPackage& run, std::string& first_header, AtomicFile& out) {
  RunState st{run, {}, 0, {}, {}, false, 0, 0, 0, 0, 0, 0, 0, -1, {}, {}};
  for (const auto& c : run.pkg["vzero"]["channels"])
    if (c.value("conversion", "") == to_string(ConvertMode::signal_only))
      st.signal_only.emplace(c.value("source", ""), c.value("channel", ""));
  const std::string file = run.table_path("rates");
  TableLines lines(file, [&](const TableRow& r) { row(r, st); });
  stream_lines(
      file,
      [&](std::string_view h) {
        take_header(h, file, first_header, out);
        lines.text(h);
      },
      [&](std::string_view rows) {
        out.append(rows);
        lines.text(rows);
      });
  lines.finish();
  if (st.next != run.exports.size())
    throw InputError(Where{file},
                     fmt::format("expected rows of {}, found none: rates.csv does not follow the exports "
                                 "{} lists",
                                 run.exports[st.next], run.path),
                     {"merge the run folder as `vzero rates` wrote it, or run that part again"});
  return missing_substrate_text(st.wells.names.size(), st.wells.first, map_source_);
}

std::string RatesMerger::merged_warning() const {
  return missing_substrate_text(all_.names.size(), all_.first, map_source_);
}

SummaryTable RatesMerger::summary() { return summary_.finish(); }

}  // namespace vzero::detail
