// Grid shape: per read a label line with the read time (grid.read_label, group 1; group 2
// the temperature), a header of column numbers, then one line per plate row.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "ingest/grid_lines.hpp"
#include "ingest/reader_common.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

struct Layout {
  std::vector<int> columns;    // 0-based plate columns, in header order
  std::vector<int> rows;       // 0-based plate rows, in the order of the first read
  std::vector<int> row_lines;  // the line of each in the first read
  std::vector<WellId> wells;   // slot order: row-major over rows × columns
  int first_line = 0;
};

// What the grid reader keeps while it reads: the channels read so far, the one being read
// (its layout is the first read's), and plate data seen outside any read.
struct GridRead {
  ReaderInput& in;
  const Profile& p = in.cp.profile;
  const std::string& file = in.src.name();
  Run run;
  std::vector<std::pair<ChannelBuilder, Layout>> done;
  std::optional<SectionStart> section;
  std::optional<ChannelBuilder> current;
  Layout layout;
  std::vector<Field> fields;
  std::vector<FieldView> rf;  // a row line's fields (views: no allocation per value)
  std::string scratch;
  std::vector<double> vals;  // one read's values and statuses, row by row
  std::vector<ReadStatus> stats;
  std::string_view line;
  bool pending_line = false;  // `line` must be handled again as an outside line
  std::string header_text;    // the read's header line: its view dies when the row lines are fetched
  int ended_line = 0;         // a line of another kind that ended a read's rows
  Stray stray;                // plate data outside any read
  std::string ended_text;
  const std::optional<PlateFormat> fixed = fixed_format(p);

  // One read's plate rows, as read.
  struct Rows {
    std::vector<int> rows, lines;
    bool more = false;  // the file goes on after them
  };

  // In detection, a read cut short ends the reading only after a complete read: the first
  // read's fault is the file's (and tells which line stops this profile).
  bool read_before() const { return current.has_value() || !done.empty(); }

  void close_channel() {
    if (!current) return;
    for (const auto& d : done) {
      if (d.first.name() == current->name())
        throw InputError(Where{file, layout.first_line},
                         fmt::format("channel {} appears twice in the file", current->name()),
                         {"give each channel section its own label, or split the file"});
    }
    done.emplace_back(std::move(*current), layout);
    current.reset();
    layout = Layout{};
  }

  // A line outside a read's rows; false when it is a read label, whose block `b` receives.
  bool outside_line(int ln, Block& b) {
    if (trim(line).empty()) return true;
    if (auto s = match_section(in.cp, line)) {
      close_channel();
      section = *s;
      section->line = ln;
      ended_line = 0;
      return true;
    }
    re2::StringPiece time_sp, temp_sp;
    bool is_label = in.cp.read_label->NumberOfCapturingGroups() >= 2
                        ? RE2::PartialMatch(line, *in.cp.read_label, &time_sp, &temp_sp)
                        : RE2::PartialMatch(line, *in.cp.read_label, &time_sp);
    const std::string temp_text(temp_sp.data() ? std::string_view(temp_sp.data(), temp_sp.size()) : "");
    if (!is_label) {
      stray_grid_line(in.cp, line, Where{file, ln, 1, std::string(line)}, ended_line, ended_text, stray);
      match_capture(in.cp, line, run.metadata);
      in.info.saw_preamble(line, ln);
      return true;
    }
    ended_line = 0;
    stray.header_line = 0;
    b = read_label(in, line, ln, time_sp, temp_text);
    return false;
  }

  // The read whose label is at line ln; false when a prefix read ends the input here.
  bool read_block(int ln, const Block& b) {
    std::string_view hline;
    do {
      if (!in.src.next(hline)) {
        if (in.prefix_only && read_before()) return false;
        throw InputError(Where{file, ln, 0, b.label_text},
                         "the file ends after a read label; expected a header of column numbers",
                         {"the export looks truncated: re-export it or delete the incomplete last read"});
      }
    } while (trim(hline).empty());
    const int hl = in.src.line_number();
    header_text.assign(hline);
    char d = p.delimiter ? p.delimiter : guess_delimiter(hline);
    if (d == 0) d = '\t';
    if (in.info.delimiter == 0) {
      in.info.delimiter = d;
      in.info.delimiter_line = p.delimiter ? 0 : hl;
    }
    split_fields_into(hline, d, fields);
    const std::vector<int> cols = column_numbers(fields, fixed, Where{file, hl, 0, header_text}, ln);
    if (cols.empty()) {
      throw InputError(Where{file, hl, 1, header_text},
                       "expected a header of column numbers (empty first field, then 1, 2, …)", {});
    }
    Rows rows;
    if (!read_rows(cols, d, ln, hl, rows)) return false;
    if (rows.rows.empty()) {
      if (in.prefix_only && !rows.more && read_before()) return false;
      throw InputError(Where{file, hl, 0, header_text},
                       fmt::format("expected plate rows (A, B, …) after the header of the read at line {}", ln),
                       {"check that the export is complete"});
    }
    return add_read(b, cols, rows, ln);
  }

  // The plate rows after a header at line hl, up to a line of another kind (kept in `line`
  // for the outside loop); false when a prefix read ends the input at a row cut short.
  bool read_rows(const std::vector<int>& cols, char d, int ln, int hl, Rows& out) {
    vals.clear();  // rows × columns, row by row
    stats.clear();
    std::string_view rl;
    std::vector<int> blanks;  // blank lines among the rows, noted when a row follows
    while ((out.more = in.src.next(rl))) {
      int rln = in.src.line_number();
      if (trim(rl).empty()) {
        blanks.push_back(rln);
        continue;
      }
      split_views_into(rl, d, rf, scratch);
      auto row = parse_row_label(rf[0].text);
      if (!row) {
        off_grid_row(in.cp, rl, d, cols.size(), Where{file, rln, rf[0].column, std::string(rl)});
        line = rl;
        pending_line = true;
        ended_line = rln;
        ended_text = std::string(rl);
        break;
      }
      for (int bl : blanks)
        in.info.notes.push_back(
            fmt::format("line {}: a blank line among the plate rows of the read at line {}, read through", bl, ln));
      blanks.clear();
      if (rf.size() == cols.size() + 2 && trim(rf.back().text).empty()) rf.pop_back();
      if (rf.size() != cols.size() + 1) {
        if (in.prefix_only && read_before()) return false;
        int col = rf.size() > cols.size() + 1 ? rf[cols.size() + 1].column : static_cast<int>(rl.size()) + 1;
        throw InputError(Where{file, rln, col, std::string(rl)},
                         fmt::format("expected {} values in row {} as in the header at line {}, found {}", cols.size(),
                                     row_label(*row), hl, rf.size() - 1),
                         {"check for a truncated or extra field; delete an incomplete last read to use the rest"});
      }
      check_row(*row, out, ln, rln, rl);
      out.rows.push_back(*row);
      out.lines.push_back(rln);
      read_row_values(in, rf, cols, *row, rln, rl, vals, stats);
    }
    return true;
  }

  // A plate row given twice in one read, or off the profile's plate, is an error.
  void check_row(int row, const Rows& seen, int ln, int rln, std::string_view rl) {
    for (std::size_t k = 0; k < seen.rows.size(); ++k) {
      if (seen.rows[k] == row)
        throw InputError(Where{file, rln, 1, std::string(rl)},
                         fmt::format("row {} appears twice in the read at line {} (first at line {})", row_label(row),
                                     ln, seen.lines[k]),
                         {"remove the duplicated row"});
    }
    if (fixed && row >= fixed->rows) off_plate_row_error(*fixed, row, Where{file, rln, rf[0].column, std::string(rl)});
    if (in.first_value && in.first_value->line == 0) *in.first_value = Where{file, rln, rf[1].column, std::string(rl)};
  }

  // A read's values into its channel: the first read sets the channel's wells, later reads
  // must cover the same; false when a prefix read ends the input at one that does not.
  bool add_read(const Block& b, const std::vector<int>& cols, const Rows& rows, int ln) {
    if (!current) {
      layout.columns = cols;
      layout.rows = rows.rows;
      layout.row_lines = rows.lines;
      layout.first_line = ln;
      for (int r : rows.rows)
        for (int c : cols) layout.wells.push_back(WellId{r, c});
      const SectionStart st = section ? *section : default_section(p);
      in.info.channels.emplace_back(st.name, channel_basis(st, p));
      current.emplace(st, layout.wells);
    } else if (cols != layout.columns || rows.rows != layout.rows) {
      if (in.prefix_only && !rows.more) return false;
      if (cols == layout.columns)
        row_mismatch(layout.rows, layout.row_lines, rows.rows, rows.lines, ln, Where{file, 0, 1, ""});
      throw InputError(
          Where{file, ln, 0, b.label_text},
          fmt::format("the read at line {} has {} rows × {} columns; the first read of channel {} "
                      "(line {}) has {} × {}",
                      ln, rows.rows.size(), cols.size(), current->name(), layout.first_line, layout.rows.size(),
                      layout.columns.size()),
          {"every read of a channel must cover the same wells; re-export, or delete the incomplete read"});
    }
    int read = current->add_read(b.time_s, b.temp_c, Where{file, ln, 1, b.label_text});
    for (std::size_t r = 0; r < rows.rows.size(); ++r)
      for (std::size_t c = 0; c < cols.size(); ++c)
        current->set(read, static_cast<int>(r * cols.size() + c), vals[r * cols.size() + c],
                     stats[r * cols.size() + c]);
    return true;
  }

  // After the last read: at least one read, no plate data outside reads, the plate format.
  Run finish() {
    close_channel();
    if (done.empty()) {
      std::string at =
          p.source == "built-in" ? "built-in profile " + p.name : fmt::format("{}:{}", p.source, p.grid_read_line);
      throw InputError(Where{file}, "found no reads: no line matches the profile's `grid.read_label`",
                       {fmt::format("set `grid.read_label` ('{}', {}) to a regex matching this file's read labels",
                                    p.grid_read_label, at),
                        "try another profile with --profile"});
    }
    if (stray.error) throw *stray.error;  // plate data no read label reads: nothing is dropped
    std::vector<WellId> all;
    for (const auto& d : done) all.insert(all.end(), d.first.wells().begin(), d.first.wells().end());
    run.format = decide_format(p, all, file, run.format_inferred);
    for (auto& d : done) run.channels.push_back(std::move(d.first).finish(run.format));
    return std::move(run);
  }
};

}  // namespace

Run read_grid(ReaderInput in) {
  GridRead g{in};
  while (g.pending_line || in.src.next(g.line)) {
    g.pending_line = false;
    const int ln = in.src.line_number();
    Block b;
    if (g.outside_line(ln, b)) continue;
    if (!g.read_block(ln, b)) break;
  }
  return g.finish();
}

}  // namespace vzero::detail
