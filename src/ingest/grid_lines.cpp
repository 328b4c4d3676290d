// The grid reader's line-level steps (declared in grid_lines.hpp; the reader's loop is in
// read_grid.cpp).
#include "ingest/grid_lines.hpp"

#include <fmt/format.h>
#include <algorithm>

#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

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
  if (word("ms")) return TimeUnit::milliseconds;
  return std::nullopt;
}

// A header of column numbers: an empty first field, then numbers (the last may be empty).
bool column_header_look(const std::vector<FieldView>& f) {
  if (f.size() < 2 || !trim(f[0].text).empty()) return false;
  for (std::size_t i = 1; i < f.size(); ++i)
    if (!parse_number(trim(f[i].text)) && !(i + 1 == f.size() && trim(f[i].text).empty())) return false;
  return true;
}

}  // namespace

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



// A line outside any read: an error when it is a plate row (at the header of column numbers
// before it, if any, or at the line of another kind that ended a read's rows).
void stray_grid_line(const CompiledProfile& cp, std::string_view line, const Where& here, int ended_line,
                     const std::string& ended_text, Stray& st) {
  const char d = cp.profile.delimiter ? cp.profile.delimiter : guess_delimiter(line);
  if (d == 0) {
    st.header_line = 0;
    return;
  }
  // This runs on every line of a file that detection tries a grid profile on. Only the first
  // field decides unless it is empty: without quotes it is the text before the first
  // delimiter, as split_views_into gives it; otherwise the line is split (views, reused).
  std::string_view first = line.substr(0, line.find(d));
  if (line.find('"') != std::string_view::npos || trim(first).empty()) {
    thread_local std::vector<FieldView> f;
    thread_local std::string scratch;
    split_views_into(line, d, f, scratch);
    if (column_header_look(f)) {
      st.header_line = here.line;
      st.header_text = std::string(line);
      return;
    }
    first = f[0].text;
  }
  const bool row = parse_row_label(first) && looks_like_data_row(cp, line, d);
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

}  // namespace vzero::detail
