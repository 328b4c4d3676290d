// The wide reader's header line (wide_header.hpp).
#include "ingest/wide_header.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <utility>

namespace vzero::detail {

namespace {

// True when field i and every field after it are empty: the columns a spreadsheet adds at
// the end of each line when it saves a CSV again.
bool trailing_empty(const std::vector<Field>& fields, std::size_t i) {
  for (std::size_t k = i; k < fields.size(); ++k)
    if (!trim(fields[k].text).empty()) return false;
  return true;
}

// Keeps in `near` a line of well columns that lacks only a time column: every field a well,
// an empty field, a temperature or ignored column, but for at most one (a time column under
// a name the profile does not know).
void note_near_header(const Profile& p, std::string_view line, const std::string& file, int line_no,
                      const std::vector<Field>& fields, int wells, std::optional<InputError>& near) {
  const Field* unknown = nullptr;
  const Field* counter = nullptr;  // an ignored column that numbers the reads ("Cycle"): no clock
  for (const auto& f : fields) {
    const std::string_view name = trim(f.text);
    const std::string l = lower(name);
    if (!counter && named_in(name, p.ignore_columns) && (l.rfind("cycle", 0) == 0 || l.rfind("read", 0) == 0))
      counter = &f;
    if (name.empty() || parse_well(name) || temperature_header(name, p.temperature_columns) ||
        named_in(name, p.ignore_columns))
      continue;
    if (unknown) return;  // two fields that are neither: not a header of wells
    unknown = &f;
  }
  if (!unknown) unknown = counter;  // missing_column_error says why a read number will not do
  near = missing_column_error(Where{file, line_no, unknown ? unknown->column : 1, std::string(line)}, "time",
                              p.time_columns, fmt::format("of {} well column{}", wells, wells == 1 ? "" : "s"),
                              unknown ? trim(unknown->text) : std::string_view());
}

// A well column named by its well and a channel tag: "A1 (340)", "A1 [405 nm]", "A1_340",
// "340: A1", "ex485/em520 A1". The well and the tag (the rest of the header cell without the
// separators at its ends and one pair of brackets around it), or nullopt: no word of the cell
// is a well, two are, or nothing is left beside it.
std::optional<std::pair<WellId, std::string>> tagged_well(std::string_view name) {
  constexpr std::string_view k_between = " ()[]_-:/";
  std::optional<WellId> well;
  std::size_t from = 0, to = 0;
  for (std::size_t at = 0; at <= name.size();) {
    const std::size_t end = std::min(name.find_first_of(k_between, at), name.size());
    if (end > at) {
      if (auto w = parse_well(name.substr(at, end - at))) {
        if (well) return std::nullopt;
        well = w;
        from = at;
        to = end;
      }
    }
    at = end + 1;
  }
  if (!well) return std::nullopt;
  std::string rest = std::string(name.substr(0, from)) + " " + std::string(name.substr(to));
  std::string_view tag = rest;
  while (!tag.empty() && std::string_view(" _-:/").find(tag.front()) != std::string_view::npos) tag.remove_prefix(1);
  while (!tag.empty() && std::string_view(" _-:/").find(tag.back()) != std::string_view::npos) tag.remove_suffix(1);
  if (tag.size() >= 2 && ((tag.front() == '(' && tag.back() == ')') || (tag.front() == '[' && tag.back() == ']')) &&
      tag.find_first_of("()[]", 1) == tag.size() - 1)
    tag = trim(tag.substr(1, tag.size() - 2));
  if (tag.empty()) return std::nullopt;
  return std::make_pair(*well, std::string(tag));
}

// Keeps in `near` a line with a time column whose other columns name no well as such, when
// one of them holds a well name among other words ("Well A1", "A1 (405)") but not every well
// column does (try_header reads those): the header, most likely, with its well columns
// written another way.
void note_decorated_wells(std::string_view line, const std::string& file, int line_no, const std::vector<Field>& fields,
                          int time_col, std::optional<InputError>& near) {
  for (std::size_t i = 0; i < fields.size(); ++i) {
    if (static_cast<int>(i) == time_col) continue;
    const std::string_view name = trim(fields[i].text);
    if (auto tw = tagged_well(name)) {
      near = InputError(
          Where{file, line_no, fields[i].column, std::string(line)},
          fmt::format("expected well columns named by their wells alone (A1 … AF48) beside the time column \"{}\", "
                      "found \"{}\"",
                      trim(fields[static_cast<std::size_t>(time_col)].text), name),
          {fmt::format("rename the well columns to the bare well names (\"{}\" → \"{}\") and read the file again",
                       name, well_name(tw->first))});
      return;
    }
  }
}

// True when every column but the time, temperature, ignored and empty ones is a tagged well
// column (and there is one).
bool all_tagged(const Profile& p, const std::vector<Field>& fields, int time_col) {
  int tagged = 0;
  for (std::size_t i = 0; i < fields.size(); ++i) {
    const std::string_view name = trim(fields[i].text);
    if (static_cast<int>(i) == time_col || name.empty() || temperature_header(name, p.temperature_columns) ||
        named_in(name, p.ignore_columns))
      continue;
    if (!tagged_well(name)) return false;
    ++tagged;
  }
  return tagged > 0;
}

}  // namespace

std::optional<Header> try_header(const Profile& p, std::string_view line, const std::string& file, int line_no,
                                 std::vector<Field>& fields, std::optional<InputError>& near, char delimiter) {
  char d = delimiter ? delimiter : guess_delimiter(line);
  if (d == 0) return std::nullopt;
  split_fields_into(line, d, fields);
  int time_col = -1, wells = 0;
  for (std::size_t i = 0; i < fields.size(); ++i) {
    if (time_col < 0 && time_header(fields[i].text, p.time_columns))
      time_col = static_cast<int>(i);
    else if (parse_well(fields[i].text))
      ++wells;
  }
  if (time_col < 0 && wells > 0 && !near) note_near_header(p, line, file, line_no, fields, wells, near);
  const bool tagged = time_col >= 0 && wells == 0 && all_tagged(p, fields, time_col);
  if (time_col >= 0 && wells == 0 && !tagged && !near) note_decorated_wells(line, file, line_no, fields, time_col, near);
  if (time_col < 0 || (wells == 0 && !tagged)) return std::nullopt;
  Header h;
  h.delimiter = d;
  h.line = line_no;
  h.time_col = time_col;
  const Field& tf = fields[static_cast<std::size_t>(time_col)];
  const auto stated = unit_in_header(tf.text);
  const std::string time_header = fmt::format("the time header \"{}\"", trim(tf.text));
  h.time_where = Where{file, line_no, tf.column, std::string(line)};
  check_stated_unit(p, stated, h.time_where, time_header);
  h.time_unit = stated.value_or(p.time_unit);
  h.time_basis = stated ? time_header : p.time_unit_from;
  std::vector<std::vector<int>> seen_at(1, std::vector<int>(32 * 48, 0));  // per channel: field where each
                                                                           // well was first seen, 0 = not yet
  const std::optional<PlateFormat> fixed = fixed_format(p);
  // A well column's well and channel (0 when untagged); a tag seen first gets its channel.
  int c = 0;
  const auto well_of = [&](std::string_view name) -> std::optional<WellId> {
    c = 0;
    if (!tagged) return parse_well(name);
    auto tw = tagged_well(name);
    if (!tw) return std::nullopt;
    const auto known = std::find(h.tags.begin(), h.tags.end(), tw->second);
    c = static_cast<int>(known - h.tags.begin());
    if (known == h.tags.end()) {
      h.tags.push_back(tw->second);
      h.tag_wells.emplace_back();
      if (c > 0) seen_at.emplace_back(32 * 48, 0);
    }
    if (h.tagged_example.empty()) h.tagged_example = std::string(name);
    return tw->first;
  };
  for (std::size_t i = 0; i < fields.size(); ++i) {
    std::string_view name = trim(fields[i].text);
    int col = static_cast<int>(i);
    if (col == time_col) {
      h.roles.push_back(ColumnRole::time);
      h.slot.push_back(-1);
      h.chan.push_back(-1);
    } else if (h.temp_col < 0 && temperature_header(name, p.temperature_columns)) {
      h.temp_col = col;
      h.roles.push_back(ColumnRole::temperature);
      h.slot.push_back(-1);
      h.chan.push_back(-1);
    } else if (auto w = well_of(name)) {
      int& prev_field = seen_at[static_cast<std::size_t>(c)][static_cast<std::size_t>(w->row * 48 + w->column)];
      if (prev_field != 0) {
        throw InputError(Where{file, line_no, fields[i].column, std::string(line)},
                         fmt::format("well {}{} appears twice in the header (fields {} and {})", well_name(*w),
                                     tagged ? fmt::format(" tagged \"{}\"", h.tags[static_cast<std::size_t>(c)]) : "",
                                     prev_field, i + 1),
                         {"remove or rename the duplicated column"});
      }
      prev_field = static_cast<int>(i) + 1;
      if (fixed && !fixed->holds(*w))
        off_plate_error(*fixed, *w, Where{file, line_no, fields[i].column, std::string(line)});
      std::vector<WellId>& channel_wells = tagged ? h.tag_wells[static_cast<std::size_t>(c)] : h.wells;
      h.roles.push_back(ColumnRole::well);
      h.slot.push_back(static_cast<int>(channel_wells.size()));
      h.chan.push_back(c);
      channel_wells.push_back(*w);
    } else if (named_in(name, p.ignore_columns) || (name.empty() && trailing_empty(fields, i))) {
      h.roles.push_back(name.empty() ? ColumnRole::padding : ColumnRole::ignored);
      h.slot.push_back(-1);
      h.chan.push_back(-1);
    } else if (auto tw = tagged_well(name); tw && !tagged) {
      throw InputError(Where{file, line_no, fields[i].column, std::string(line)},
                       fmt::format("expected a bare well name like the header's other well columns, found \"{}\" "
                                   "(well {} with the tag \"{}\")",
                                   name, well_name(tw->first), tw->second),
                       {"name every well column the same way: all by the well alone (A1), or all by the well and "
                        "its channel tag (\"A1 (340)\", one channel per tag)"});
    } else {
      throw InputError(
          Where{file, line_no, fields[i].column, std::string(line)},
          fmt::format("expected a well name (A1 … AF48) or a known column in the header, found \"{}\"", name),
          {fmt::format("add \"{}\" to `columns.ignore` (or `columns.temperature`) in the profile", name)});
    }
  }
  return h;
}


}  // namespace vzero::detail
