// Long shape: one row per observation — well, time, value, and optionally channel and
// temperature — in any order. Rows are gathered per channel, then laid out as a
// reads × wells matrix over the distinct read times; a well with no row at a time gets
// the status `missing`.
#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <map>

#include "detail/reader_common.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

struct Obs {
  double time_s;
  double value;
  double temp_c;
  std::int32_t line;
  std::uint16_t well;  // row * 48 + column (the largest plate's layout)
  ReadStatus status;
};

struct Columns {
  char delimiter = ',';
  int well = -1, time = -1, value = -1, channel = -1, temp = -1;
  std::size_t count = 0;
  TimeUnit time_unit = TimeUnit::seconds;
  int line = 0;
};

int find_column(const std::vector<Field>& f, const std::vector<std::string>& names) {
  for (const auto& n : names)
    for (std::size_t i = 0; i < f.size(); ++i)
      if (iequals(trim(f[i].text), n)) return static_cast<int>(i);
  return -1;
}

}  // namespace

Run read_long(ReaderInput in) {
  const Profile& p = in.cp.profile;
  const std::string& file = in.src.name();
  Run run;
  std::optional<Columns> cols;
  std::vector<Field> fields;
  std::string_view line;
  std::vector<std::string> channel_names;  // in order of first appearance
  std::vector<std::vector<Obs>> obs;
  std::string last_channel_text;
  std::size_t last_channel = 0;

  while (in.src.next(line)) {
    const int ln = in.src.line_number();
    std::string_view tl = trim(line);
    if (tl.empty()) continue;
    if (!cols) {
      char d = p.delimiter ? p.delimiter : guess_delimiter(line);
      if (d != 0 && tl.front() != '#') {
        split_fields_into(line, d, fields);
        Columns c;
        c.delimiter = d;
        c.well = find_column(fields, p.well_columns);
        c.time = find_column(fields, p.time_columns);
        c.value = find_column(fields, p.value_columns);
        if (c.well >= 0 && c.time >= 0 && c.value >= 0) {
          c.channel = find_column(fields, p.channel_columns);
          c.temp = find_column(fields, p.temperature_columns);
          c.count = fields.size();
          c.line = ln;
          c.time_unit = unit_in_header(fields[static_cast<std::size_t>(c.time)].text).value_or(p.time_unit);
          cols = c;
          continue;
        }
      }
      match_capture(in.cp, line, run.metadata);
      continue;
    }
    if (tl.front() == '#') {
      match_capture(in.cp, line, run.metadata);
      continue;
    }
    split_fields_into(line, cols->delimiter, fields);
    if (fields.size() == cols->count + 1 && trim(fields.back().text).empty()) fields.pop_back();
    if (fields.size() != cols->count) {
      if (in.prefix_only) break;
      int col = fields.size() > cols->count ? fields[cols->count].column : static_cast<int>(line.size()) + 1;
      throw InputError(Where{file, ln, col, std::string(line)},
                       fmt::format("expected {} fields as in the header at line {}, found {}", cols->count, cols->line,
                                   fields.size()),
                       {"check for a truncated or extra field; delete an incomplete last line to use the rest"});
    }
    const Field& wf = fields[static_cast<std::size_t>(cols->well)];
    auto w = parse_well(wf.text);
    if (!w) {
      throw InputError(Where{file, ln, wf.column, std::string(line)},
                       fmt::format("expected a well name (A1 … AF48), found \"{}\"", trim(wf.text)),
                       {"check the well column; names are a row letter (A–Z, AA–AF) and a column number"});
    }
    const Field& tf = fields[static_cast<std::size_t>(cols->time)];
    auto t = parse_time(tf.text, cols->time_unit, p.decimal);
    if (!t) {
      throw InputError(Where{file, ln, tf.column, std::string(line)},
                       fmt::format("expected a read time, found \"{}\"", trim(tf.text)),
                       {"write times as numbers (unit from the header or `time_unit`) or as h:mm:ss"});
    }
    Obs o{};
    o.time_s = *t;
    o.line = ln;
    o.well = static_cast<std::uint16_t>(w->row * 48 + w->column);
    o.temp_c = std::nan("");
    const Field& vf = fields[static_cast<std::size_t>(cols->value)];
    double v = 0;
    switch (read_cell(p, vf.text, v)) {
      case CellKind::number: o.value = v; o.status = ReadStatus::ok; break;
      case CellKind::overflow: o.value = std::nan(""); o.status = ReadStatus::overflow; break;
      case CellKind::missing: o.value = std::nan(""); o.status = ReadStatus::missing; break;
      case CellKind::bad: bad_value_error(p, file, ln, vf.column, line, vf.text, "well " + well_name(*w));
    }
    if (cols->temp >= 0) {
      const Field& f = fields[static_cast<std::size_t>(cols->temp)];
      double tv = 0;
      CellKind k = read_cell(p, f.text, tv);
      if (k == CellKind::number) o.temp_c = tv;
      else if (k == CellKind::bad) bad_value_error(p, file, ln, f.column, line, f.text, "the temperature");
    }
    std::size_t ch = 0;
    if (cols->channel >= 0) {
      std::string_view name = trim(fields[static_cast<std::size_t>(cols->channel)].text);
      if (name.empty()) {
        throw InputError(Where{file, ln, fields[static_cast<std::size_t>(cols->channel)].column, std::string(line)},
                         "expected a channel name, found an empty field", {"name the channel on every row"});
      }
      if (name == last_channel_text) {
        ch = last_channel;
      } else {
        auto it = std::find(channel_names.begin(), channel_names.end(), name);
        ch = static_cast<std::size_t>(it - channel_names.begin());
        if (it == channel_names.end()) {
          channel_names.emplace_back(name);
          obs.emplace_back();
        }
        last_channel_text = std::string(name);
        last_channel = ch;
      }
    } else if (obs.empty()) {
      channel_names.push_back(p.signal_name);
      obs.emplace_back();
    }
    obs[ch].push_back(o);
  }
  if (!cols) {
    throw InputError(Where{file},
                     "found no header naming the well, time and value columns",
                     {"set `columns.well`, `columns.time` and `columns.value` in the profile to this file's header names",
                      "try another profile with --profile"});
  }
  if (obs.empty()) {
    throw InputError(Where{file, cols->line}, "the table has a header but no rows", {"check that the export is complete"});
  }
  std::vector<WellId> all;
  std::vector<bool> seen(32 * 48, false);
  for (const auto& ch : obs)
    for (const auto& o : ch) seen[o.well] = true;
  for (int k = 0; k < 32 * 48; ++k)
    if (seen[static_cast<std::size_t>(k)]) all.push_back(WellId{k / 48, k % 48});
  run.format = decide_format(p, all, file, run.format_inferred);

  for (std::size_t c = 0; c < obs.size(); ++c) {
    auto& v = obs[c];
    std::stable_sort(v.begin(), v.end(), [](const Obs& a, const Obs& b) {
      return a.time_s < b.time_s || (a.time_s == b.time_s && a.well < b.well);
    });
    SectionStart s = default_section(p);
    if (cols->channel >= 0) {
      s.name = channel_names[c];
      s.quantity = Quantity::other;
      s.unit = p.signal_unit;
      guess_quantity(s.name, s.quantity, s.unit);
      if (s.quantity == Quantity::other) s.quantity = p.signal_quantity;
    }
    std::vector<WellId> wells;
    std::vector<int> slot_of(32 * 48, -1);
    for (const auto& o : v) {
      if (slot_of[o.well] < 0) {
        slot_of[o.well] = static_cast<int>(wells.size());
        wells.push_back(WellId{o.well / 48, o.well % 48});
      }
    }
    ChannelBuilder b(s, wells);
    int read = -1;
    double read_time = std::nan("");
    std::vector<int> line_of_slot(wells.size(), 0);
    for (const auto& o : v) {
      if (read < 0 || o.time_s != read_time) {
        read = b.add_read(o.time_s, std::nan(""), Where{file, o.line});
        read_time = o.time_s;
        std::fill(line_of_slot.begin(), line_of_slot.end(), 0);
      }
      int slot = slot_of[o.well];
      if (line_of_slot[static_cast<std::size_t>(slot)] != 0) {
        throw InputError(Where{file, o.line},
                         fmt::format("well {} has two rows for time {} s in channel {} (the other at line {})",
                                     well_name(wells[static_cast<std::size_t>(slot)]), o.time_s, s.name,
                                     line_of_slot[static_cast<std::size_t>(slot)]),
                         {"remove the duplicated observation"});
      }
      line_of_slot[static_cast<std::size_t>(slot)] = o.line;
      b.set(read, slot, o.value, o.status);
    }
    Channel ch = std::move(b).finish(run.format);
    // Temperature per read: the first value given at that time.
    if (cols->temp >= 0) {
      ch.temperature_c.assign(ch.time_s.size(), std::nan(""));
      std::size_t r = 0;
      for (const auto& o : v) {
        while (r < ch.time_s.size() && ch.time_s[r] < o.time_s) ++r;
        if (r < ch.time_s.size() && std::isnan(ch.temperature_c[r]) && !std::isnan(o.temp_c))
          ch.temperature_c[r] = o.temp_c;
      }
      if (std::all_of(ch.temperature_c.begin(), ch.temperature_c.end(), [](double t) { return std::isnan(t); }))
        ch.temperature_c.clear();
    }
    run.channels.push_back(std::move(ch));
    std::vector<Obs>().swap(v);  // free as we go
  }
  return run;
}

}  // namespace vzero::detail
