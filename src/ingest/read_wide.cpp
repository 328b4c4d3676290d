// Wide shape: optional preamble, then per channel a header row (time, optional
// temperature, one column per well) and one row per read.
#include <fmt/format.h>
#include <cmath>

#include "ingest/reader_common.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

enum class ColumnRole { time, temperature, ignored, well };

struct Header {
  char delimiter = ',';
  std::vector<ColumnRole> roles;
  std::vector<int> slot;  // well slot per column, -1 otherwise
  std::vector<WellId> wells;
  int time_col = -1, temp_col = -1;
  TimeUnit time_unit = TimeUnit::seconds;
  int line = 0;
};

bool matches_any(std::string_view text, const std::vector<std::string>& names) {
  const std::string_view t = trim(text);
  for (const auto& n : names)
    if (iequals(t, n)) return true;
  return false;
}

// Keeps in `near` a line of well columns that lacks only a time column: every field a well,
// an empty field, a temperature or ignored column, but for at most one (a time column under
// a name the profile does not know).
void note_near_header(const Profile& p, std::string_view line, const std::string& file, int line_no,
                      const std::vector<Field>& fields, int wells, std::optional<InputError>& near) {
  const Field* unknown = nullptr;
  for (const auto& f : fields) {
    const std::string_view name = trim(f.text);
    if (name.empty() || parse_well(name) || matches_any(name, p.temperature_columns) ||
        matches_any(name, p.ignore_columns))
      continue;
    if (unknown) return;  // two fields that are neither: not a header of wells
    unknown = &f;
  }
  near = missing_column_error(Where{file, line_no, unknown ? unknown->column : 1, std::string(line)}, "time",
                              p.time_columns, fmt::format("of {} well column{}", wells, wells == 1 ? "" : "s"),
                              unknown ? trim(unknown->text) : std::string_view());
}

// A header line has a time column and at least one well column. The first line with well
// columns but no time column is kept in `near` (the error when no header is found).
std::optional<Header> try_header(const Profile& p, std::string_view line, const std::string& file, int line_no,
                                 std::vector<Field>& fields, std::optional<InputError>& near) {
  char d = p.delimiter ? p.delimiter : guess_delimiter(line);
  if (d == 0) return std::nullopt;
  split_fields_into(line, d, fields);
  int time_col = -1, wells = 0;
  for (std::size_t i = 0; i < fields.size(); ++i) {
    if (time_col < 0 && matches_any(fields[i].text, p.time_columns))
      time_col = static_cast<int>(i);
    else if (parse_well(fields[i].text))
      ++wells;
  }
  if (time_col < 0 && wells > 0 && !near) note_near_header(p, line, file, line_no, fields, wells, near);
  if (time_col < 0 || wells == 0) return std::nullopt;
  Header h;
  h.delimiter = d;
  h.line = line_no;
  h.time_col = time_col;
  h.time_unit = unit_in_header(fields[static_cast<std::size_t>(time_col)].text).value_or(p.time_unit);
  std::vector<int> seen_at(32 * 48, 0);  // field where each well was first seen, 0 = not yet
  const std::optional<PlateFormat> fixed = fixed_format(p);
  for (std::size_t i = 0; i < fields.size(); ++i) {
    std::string_view name = trim(fields[i].text);
    int col = static_cast<int>(i);
    if (col == time_col) {
      h.roles.push_back(ColumnRole::time);
      h.slot.push_back(-1);
    } else if (h.temp_col < 0 && matches_any(name, p.temperature_columns)) {
      h.temp_col = col;
      h.roles.push_back(ColumnRole::temperature);
      h.slot.push_back(-1);
    } else if (auto w = parse_well(name)) {
      int& prev_field = seen_at[static_cast<std::size_t>(w->row * 48 + w->column)];
      if (prev_field != 0) {
        throw InputError(
            Where{file, line_no, fields[i].column, std::string(line)},
            fmt::format("well {} appears twice in the header (fields {} and {})", well_name(*w), prev_field, i + 1),
            {"remove or rename the duplicated column"});
      }
      prev_field = static_cast<int>(i) + 1;
      if (fixed && !fixed->holds(*w))
        off_plate_error(*fixed, *w, Where{file, line_no, fields[i].column, std::string(line)});
      h.roles.push_back(ColumnRole::well);
      h.slot.push_back(static_cast<int>(h.wells.size()));
      h.wells.push_back(*w);
    } else if (matches_any(name, p.ignore_columns) || (name.empty() && i + 1 == fields.size())) {
      h.roles.push_back(ColumnRole::ignored);
      h.slot.push_back(-1);
    } else {
      throw InputError(
          Where{file, line_no, fields[i].column, std::string(line)},
          fmt::format("expected a well name (A1 … AF48) or a known column in the header, found \"{}\"", name),
          {fmt::format("add \"{}\" to `columns.ignore` (or `columns.temperature`) in the profile", name)});
    }
  }
  return h;
}

}  // namespace

Run read_wide(ReaderInput in) {
  const Profile& p = in.cp.profile;
  const std::string& file = in.src.name();
  Run run;
  std::vector<ChannelBuilder> done;
  std::vector<int> done_header_line;  // header line of each finished channel, for messages
  std::optional<SectionStart> section;
  std::optional<Header> header;
  std::optional<ChannelBuilder> current;
  std::vector<Field> fields;
  std::vector<FieldView> fields_v;  // data lines: views, no allocation per value
  std::string scratch;
  std::string_view line;
  std::optional<InputError> near_header;  // a header of wells without a time column

  auto close_block = [&]() {
    if (current) {
      for (const auto& d : done) {
        if (d.name() == current->name()) {
          throw InputError(Where{file, header->line},
                           fmt::format("channel {} appears twice in the file", current->name()),
                           {"give each channel section its own label, or split the file"});
        }
      }
      done.push_back(std::move(*current));
      done_header_line.push_back(header->line);
      current.reset();
    }
    header.reset();
    section.reset();
  };

  while (in.src.next(line)) {
    const int ln = in.src.line_number();
    if (header) {
      if (trim(line).empty()) {
        close_block();
        continue;
      }
      if (auto s = match_section(in.cp, line)) {
        close_block();
        section = *s;
        continue;
      }
      split_views_into(line, header->delimiter, fields_v, scratch);
      auto tcol = static_cast<std::size_t>(header->time_col);
      std::optional<double> t;
      if (tcol < fields_v.size()) t = parse_time(fields_v[tcol].text, header->time_unit, p.decimal);
      if (!t) {
        if (fields_v.size() == header->roles.size()) {
          bad_time_error(Where{file, ln, tcol < fields_v.size() ? fields_v[tcol].column : 1, std::string(line)},
                         tcol < fields_v.size() ? fields_v[tcol].text : std::string_view(), header->time_unit,
                         p.decimal, "a read time",
                         {"write times as numbers (unit from the header or `time_unit`) or as h:mm:ss",
                          "end the data block with an empty line before any trailing text"});
        }
        // A line of another shape ends the block (trailing notes, a new preamble).
        close_block();
        match_capture(in.cp, line, run.metadata);
        continue;
      }
      std::size_t expected = header->roles.size();
      if (fields_v.size() == expected + 1 && trim(fields_v.back().text).empty()) fields_v.pop_back();
      if (fields_v.size() != expected) {
        if (in.prefix_only && (current->reads() > 0 || !done.empty())) break;
        int col = fields_v.size() > expected ? fields_v[expected].column : static_cast<int>(line.size()) + 1;
        throw InputError(Where{file, ln, col, std::string(line)},
                         fmt::format("expected {} fields as in the header at line {}, found {}", expected, header->line,
                                     fields_v.size()),
                         {"check for a truncated or extra field; a file cut off mid-row must be re-exported or "
                          "the incomplete last line deleted"});
      }
      double temp = std::nan("");
      if (header->temp_col >= 0) {
        const auto& f = fields_v[static_cast<std::size_t>(header->temp_col)];
        double v = 0;
        CellKind k = read_cell(in.cp, f.text, v);
        if (k == CellKind::number)
          temp = v;
        else if (k == CellKind::bad)
          bad_value_error(p, file, ln, f.column, line, f.text, "the temperature");
      }
      int read = current->add_read(*t, temp, Where{file, ln, fields_v[tcol].column, std::string(line)});
      if (in.first_value && in.first_value->line == 0) {
        for (std::size_t i = 0; i < fields_v.size() && in.first_value->line == 0; ++i)
          if (header->roles[i] == ColumnRole::well)
            *in.first_value = Where{file, ln, fields_v[i].column, std::string(line)};
      }
      for (std::size_t i = 0; i < fields_v.size(); ++i) {
        if (header->roles[i] != ColumnRole::well) continue;
        double v = 0;
        switch (read_cell(in.cp, fields_v[i].text, v)) {
          case CellKind::number:
            current->set(read, header->slot[i], v, ReadStatus::ok);
            break;
          case CellKind::overflow:
            current->set(read, header->slot[i], 0, ReadStatus::overflow);
            break;
          case CellKind::missing:
            current->set(read, header->slot[i], 0, ReadStatus::missing);
            break;
          case CellKind::bad:
            bad_value_error(p, file, ln, fields_v[i].column, line, fields_v[i].text,
                            "well " + well_name(header->wells[static_cast<std::size_t>(header->slot[i])]));
        }
      }
      continue;
    }
    if (trim(line).empty()) continue;
    if (auto s = match_section(in.cp, line)) {
      section = *s;
      continue;
    }
    if (auto h = try_header(p, line, file, ln, fields, near_header)) {
      header = std::move(*h);
      current.emplace(section ? *section : default_section(p), header->wells);
      continue;
    }
    match_capture(in.cp, line, run.metadata);
  }
  close_block();
  if (done.empty() && near_header) throw *near_header;
  if (done.empty()) {
    throw InputError(Where{file},
                     "found no data: expected a header line with a time column and well columns (A1, A2, …)",
                     {"check `columns.time` in the profile names this file's time header",
                      "try another profile with --profile (vzero inspect lists the built-in ones)"});
  }
  std::vector<WellId> all;
  for (const auto& b : done) all.insert(all.end(), b.wells().begin(), b.wells().end());
  run.format = decide_format(p, all, file, run.format_inferred);
  for (std::size_t i = 0; i < done.size(); ++i) {
    if (done[i].reads() == 0) {
      throw InputError(Where{file, done_header_line[i]},
                       fmt::format("channel {} has a header but no reads", done[i].name()),
                       {"check that the export is complete; delete the header if the channel was not read"});
    }
    run.channels.push_back(std::move(done[i]).finish(run.format));
  }
  return run;
}

}  // namespace vzero::detail
