// Grid shape: per read a label line with the read time (grid.read_label, group 1; group 2
// the temperature), a header of column numbers, then one line per plate row.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

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

struct Block {
  double time_s = 0;
  double temp_c = std::nan("");
  int label_line = 0;
  std::string label_text;
};

// The unit written right after the read time in a read label ("at 30 s", "at 2.5 min").
std::optional<TimeUnit> unit_after(std::string_view rest) {
  rest = trim(rest);
  auto word = [&](std::string_view w) {
    return rest.size() >= w.size() && iequals(rest.substr(0, w.size()), w) &&
           (rest.size() == w.size() || !std::isalpha(static_cast<unsigned char>(rest[w.size()])));
  };
  if (word("s") || word("sec")) return TimeUnit::seconds;
  if (word("min")) return TimeUnit::minutes;
  if (word("h")) return TimeUnit::hours;
  return std::nullopt;
}

// A line among a read's rows that is not a plate row but has a row's fields (the values of
// each column): a row label off the plate's rows ("AG", "B.", "E:"), or another delimiter.
void off_grid_row(const CompiledProfile& cp, std::string_view rl, char d, std::size_t columns, const Where& here) {
  std::vector<Field> f;
  split_fields_into(rl, d, f);
  if (f.size() == columns + 2 && trim(f.back().text).empty()) f.pop_back();
  if (f.size() == columns + 1 && looks_like_data_row(cp, rl, d)) {
    throw InputError(here,
                     fmt::format("expected a plate row label (A … Z, then AA … AF), found \"{}\"", trim(f[0].text)),
                     {"correct the row label; every plate row of a read is read, none is skipped"});
  }
  if (auto e = delimiter_error(here, rl, d, columns + 1, "the values of a plate row")) throw *e;
}

// The error for two reads of a channel whose plate rows differ: at the read that lacks a row
// the other has, where that row belongs (the line of the row found there instead, or the
// line of its last row).
[[noreturn]] void row_mismatch(const std::vector<int>& first, const std::vector<int>& first_lines,
                               const std::vector<int>& rows, const std::vector<int>& row_lines, int label_line,
                               Where where) {
  std::size_t k = 0;
  while (k < rows.size() && k < first.size() && rows[k] == first[k]) ++k;
  const bool later_lacks = k < first.size() && std::find(rows.begin(), rows.end(), first[k]) == rows.end();
  const std::vector<int>& lacking = later_lacks ? rows : first;
  const std::vector<int>& lines = later_lacks ? row_lines : first_lines;
  const int missing = later_lacks ? first[k] : rows[k];
  where.line = k < lacking.size() ? lines[k] : lines.back();
  throw InputError(where,
                   fmt::format("expected row {} {} as in the {} of the channel, found {}", row_label(missing),
                               k < lacking.size() ? "here" : "after row " + row_label(lacking.back()),
                               later_lacks ? "first read" : fmt::format("read at line {}", label_line),
                               k < lacking.size() ? "row " + row_label(lacking[k]) : std::string("none")),
                   {"every read of a channel must cover the same wells; restore the missing row"});
}

bool column_header_look(std::string_view line, char d) {
  std::vector<Field> f;
  split_fields_into(line, d, f);
  if (f.size() < 2 || !trim(f[0].text).empty()) return false;
  for (std::size_t i = 1; i < f.size(); ++i)
    if (!parse_number(trim(f[i].text)) && !(i + 1 == f.size() && trim(f[i].text).empty())) return false;
  return true;
}

// Plate data outside any read: a header of column numbers (kept until the next line shows
// whether plate rows follow it: a plate layout block of text is no data) and plate rows.
struct Stray {
  std::optional<InputError> error;  // the first, thrown at the end unless no read label matched at all
  int header_line = 0;              // a header of column numbers just before, outside any read
  std::string header_text;
};

// A line outside any read: an error when it is a plate row (at the header of column numbers
// before it, if any, or at the line of another kind that ended a read's rows).
void stray_grid_line(const CompiledProfile& cp, std::string_view line, const Where& here, int ended_line,
                     const std::string& ended_text, Stray& st) {
  const char d = cp.profile.delimiter ? cp.profile.delimiter : guess_delimiter(line);
  if (d == 0) {
    st.header_line = 0;
    return;
  }
  if (column_header_look(line, d)) {
    st.header_line = here.line;
    st.header_text = std::string(line);
    return;
  }
  std::vector<Field> f;
  split_fields_into(line, d, f);
  const bool row = parse_row_label(f[0].text) && looks_like_data_row(cp, line, d);
  const int header = st.header_line;
  st.header_line = 0;
  if (!row) return;
  if (ended_line > 0 && header != ended_line) {
    throw InputError(Where{here.file, ended_line, 1, ended_text},
                     fmt::format("expected a plate row or the end of the read, found a line of another kind; a "
                                 "plate row follows at line {}",
                                 here.line),
                     {"delete this line (or make it an empty line) so that the rows after it are read"});
  }
  if (!st.error) {
    Where at = here;
    if (header > 0) {
      at.line = header;
      at.text = st.header_text;
    }
    st.error =
        InputError(at,
                   fmt::format("expected a read label (`grid.read_label`) before {}, found none",
                               header > 0 ? "this header of column numbers and its plate rows" : "this plate row"),
                   {"restore the read label of this read, or make `grid.read_label` match it"});
  }
}

// The read time (and temperature) of a read label; a unit written after the time
// ("at 30 s") states the unit. Notes the time unit's basis in `in.info` at the first label.
Block read_label(ReaderInput& in, std::string_view line, int ln, const re2::StringPiece& time_sp,
                 const std::string& temp_text) {
  const Profile& p = in.cp.profile;
  const std::string& file = in.src.name();
  const std::string time_text(time_sp.data() ? std::string_view(time_sp.data(), time_sp.size()) : "");
  Block b;
  b.label_line = ln;
  b.label_text = std::string(line);
  TimeUnit unit = p.time_unit;
  if (time_sp.data()) {
    const auto after = static_cast<std::size_t>(time_sp.data() + time_sp.size() - line.data());
    if (auto u = unit_after(line.substr(after))) {
      check_stated_unit(p, u, Where{file, ln, 1, std::string(line)}, fmt::format("the read label at line {}", ln));
      unit = *u;
      if (in.info.time_basis.empty())
        in.info.time_basis = fmt::format("the read label at line {} (\"{}\")", ln, trim(line));
    }
  }
  if (in.info.time_where.line == 0) {
    in.info.time_where = Where{file, ln, 1, std::string(line)};
    in.info.time_unit = unit;
    if (in.info.time_basis.empty()) in.info.time_basis = p.time_unit_from;
  }
  in.info.saw_time(time_text);
  auto t = parse_time(time_text, unit, p.decimal);
  if (!t) {
    bad_time_error(Where{file, ln, 1, std::string(line)}, time_text, unit, p.decimal, "a read time in the read label",
                   {"make group 1 of `grid.read_label` capture the time (number or h:mm:ss)"});
  }
  b.time_s = *t;
  if (!temp_text.empty()) {
    auto v = parse_number(temp_text, p.decimal);
    if (!v) {
      throw InputError(
          Where{file, ln, 1, std::string(line)},
          fmt::format("expected a temperature in the read label, found {}", describe_found(temp_text, p.decimal)),
          {"make group 2 of `grid.read_label` capture only the number"});
    }
    b.temp_c = *v;
  }
  return b;
}

// The 0-based plate columns a header of column numbers names (`at`: its file, line and text).
std::vector<int> column_numbers(const std::vector<Field>& fields, const std::optional<PlateFormat>& fixed, Where at,
                                int ln) {
  const auto here = [&](int column) {
    at.column = column;
    return at;
  };
  std::vector<int> cols;
  for (std::size_t i = 1; i < fields.size(); ++i) {
    auto sv = trim(fields[i].text);
    if (sv.empty() && i + 1 == fields.size()) break;
    auto v = parse_number(sv);
    if (!v || *v < 1 || *v > 48 || *v != std::floor(*v)) {
      throw InputError(
          here(fields[i].column),
          fmt::format("expected a column number (1–48) in the header after the read label at line {}, found \"{}\"", ln,
                      sv),
          {"check that `grid.read_label` matches only read labels"});
    }
    int col = static_cast<int>(*v) - 1;
    if (fixed && col >= fixed->columns) off_plate_column_error(*fixed, col, here(fields[i].column));
    for (std::size_t k = 0; k < cols.size(); ++k) {
      if (cols[k] == col)
        throw InputError(here(fields[i].column),
                         fmt::format("column {} appears twice in the header after the read label at line {} "
                                     "(fields {} and {})",
                                     col + 1, ln, k + 2, i + 1),
                         {"remove the duplicated column; each well may appear once per read"});
    }
    cols.push_back(col);
  }
  return cols;
}

// Appends one plate row's values and read statuses to `vals` and `stats`.
void read_row_values(ReaderInput& in, const std::vector<FieldView>& rf, const std::vector<int>& cols, int row, int rln,
                     std::string_view rl, std::vector<double>& vals, std::vector<ReadStatus>& stats) {
  const std::size_t at = vals.size();
  vals.resize(at + cols.size(), 0.0);
  stats.resize(at + cols.size(), ReadStatus::missing);
  for (std::size_t c = 0; c < cols.size(); ++c) {
    double v = 0;
    switch (read_cell(in.cp, rf[c + 1].text, v)) {
      case CellKind::number:
        vals[at + c] = v;
        stats[at + c] = ReadStatus::ok;
        break;
      case CellKind::overflow:
        in.info.saw_overflow(rf[c + 1].text);
        stats[at + c] = ReadStatus::overflow;
        break;
      case CellKind::missing:
        stats[at + c] = ReadStatus::missing;
        break;
      case CellKind::bad:
        bad_value_error(in.cp.profile, in.src.name(), rln, rf[c + 1].column, rl, rf[c + 1].text,
                        "well " + well_name(WellId{row, cols[c]}));
    }
  }
}

}  // namespace

Run read_grid(ReaderInput in) {
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

  // In detection, a read cut short ends the reading only after a complete read: the first
  // read's fault is the file's (and tells which line stops this profile).
  auto read_before = [&]() { return current.has_value() || !done.empty(); };

  auto close_channel = [&]() {
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
  };

  while (pending_line || in.src.next(line)) {
    pending_line = false;
    int ln = in.src.line_number();
    if (trim(line).empty()) continue;
    if (auto s = match_section(in.cp, line)) {
      close_channel();
      section = *s;
      section->line = ln;
      ended_line = 0;
      continue;
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
      continue;
    }
    ended_line = 0;
    stray.header_line = 0;
    const Block b = read_label(in, line, ln, time_sp, temp_text);
    // Header of column numbers.
    std::string_view hline;
    do {
      if (!in.src.next(hline)) {
        if (in.prefix_only && read_before()) goto end_of_input;
        throw InputError(Where{file, ln, 0, b.label_text},
                         "the file ends after a read label; expected a header of column numbers",
                         {"the export looks truncated: re-export it or delete the incomplete last read"});
      }
    } while (trim(hline).empty());
    {
      int hl = in.src.line_number();
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
      // Row lines.
      std::vector<int> rows;
      vals.clear();  // rows × columns, row by row
      stats.clear();
      std::vector<int> row_lines;
      std::string_view rl;
      bool more = false;
      std::vector<int> blanks;  // blank lines among the rows, noted when a row follows
      while ((more = in.src.next(rl))) {
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
              fmt::format("line {}: a blank line among the plate rows of the read at line {}, "
                          "read through",
                          bl, ln));
        blanks.clear();
        if (rf.size() == cols.size() + 2 && trim(rf.back().text).empty()) rf.pop_back();
        if (rf.size() != cols.size() + 1) {
          if (in.prefix_only && read_before()) goto end_of_input;
          int col = rf.size() > cols.size() + 1 ? rf[cols.size() + 1].column : static_cast<int>(rl.size()) + 1;
          throw InputError(Where{file, rln, col, std::string(rl)},
                           fmt::format("expected {} values in row {} as in the header at line {}, found {}",
                                       cols.size(), row_label(*row), hl, rf.size() - 1),
                           {"check for a truncated or extra field; delete an incomplete last read to use the rest"});
        }
        for (std::size_t k = 0; k < rows.size(); ++k) {
          if (rows[k] == *row)
            throw InputError(Where{file, rln, 1, std::string(rl)},
                             fmt::format("row {} appears twice in the read at line {} (first at line {})",
                                         row_label(*row), ln, row_lines[k]),
                             {"remove the duplicated row"});
        }
        if (fixed && *row >= fixed->rows)
          off_plate_row_error(*fixed, *row, Where{file, rln, rf[0].column, std::string(rl)});
        if (in.first_value && in.first_value->line == 0)
          *in.first_value = Where{file, rln, rf[1].column, std::string(rl)};
        rows.push_back(*row);
        row_lines.push_back(rln);
        read_row_values(in, rf, cols, *row, rln, rl, vals, stats);
      }
      if (rows.empty()) {
        if (in.prefix_only && !more && read_before()) goto end_of_input;
        throw InputError(Where{file, hl, 0, header_text},
                         fmt::format("expected plate rows (A, B, …) after the header of the read at line {}", ln),
                         {"check that the export is complete"});
      }
      if (!current) {
        layout.columns = cols;
        layout.rows = rows;
        layout.row_lines = row_lines;
        layout.first_line = ln;
        for (int r : rows)
          for (int c : cols) layout.wells.push_back(WellId{r, c});
        const SectionStart st = section ? *section : default_section(p);
        in.info.channels.emplace_back(st.name, channel_basis(st, p));
        current.emplace(st, layout.wells);
      } else if (cols != layout.columns || rows != layout.rows) {
        if (in.prefix_only && !more) goto end_of_input;
        if (cols == layout.columns)
          row_mismatch(layout.rows, layout.row_lines, rows, row_lines, ln, Where{file, 0, 1, ""});
        throw InputError(
            Where{file, ln, 0, b.label_text},
            fmt::format("the read at line {} has {} rows × {} columns; the first read of channel {} "
                        "(line {}) has {} × {}",
                        ln, rows.size(), cols.size(), current->name(), layout.first_line, layout.rows.size(),
                        layout.columns.size()),
            {"every read of a channel must cover the same wells; re-export, or delete the incomplete read"});
      }
      int read = current->add_read(b.time_s, b.temp_c, Where{file, ln, 1, b.label_text});
      for (std::size_t r = 0; r < rows.size(); ++r)
        for (std::size_t c = 0; c < cols.size(); ++c)
          current->set(read, static_cast<int>(r * cols.size() + c), vals[r * cols.size() + c],
                       stats[r * cols.size() + c]);
    }
  }
end_of_input:
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
  return run;
}

}  // namespace vzero::detail
