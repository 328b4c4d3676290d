// Long shape: one row per observation — well, time, value, and optionally channel and
// temperature — in any order. Rows are gathered per channel, then laid out as a
// reads × wells matrix over the distinct read times; a well with no row at a time gets
// the status `missing`.
//
// Memory: the text is never held. Each row is kept as a 16-byte record (value, the read's
// index among its channel's distinct times, well, channel) in blocks mapped from the OS,
// and each block is given back as soon as its rows are in the matrices, so the peak is about
// 16 bytes per row (50 million rows: ~0.8 GB) rather than record plus matrix. Duplicated
// (well, time) pairs are caught while reading with one bit per cell.

#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "ingest/long_header.hpp"
#include "ingest/long_rows.hpp"
#include "ingest/reader_common.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

using namespace long_rows;
using namespace long_header;

// What the long reader keeps while it reads: the header's columns once found, the row
// records, each channel's read times, and the errors held back in case no header is found.
struct LongRead {
  ReaderInput& in;
  const Profile& p = in.cp.profile;
  const std::string& file = in.src.name();
  Run run;
  std::optional<Columns> cols;
  std::vector<FieldView> views;  // fields as views: no allocation per value
  std::string scratch;
  std::vector<ChannelRows> channels;  // in order of first appearance
  RowStore rows;
  std::vector<std::size_t> skipped_at;  // rows read before each blank or comment line of the table
  std::string last_channel_text;
  std::size_t last_channel = 0;
  const std::optional<PlateFormat> fixed = fixed_format(p);
  std::optional<InputError> near;        // a line naming the well column and only one of time and value
  std::optional<InputError> near_delim;  // a header split with another delimiter than the profile's
  std::optional<InputError> headless;    // a data row (one well name, numbers) before any header

  Where at(int ln, int column, std::string_view line) const { return Where{file, ln, column, std::string(line)}; }

  // A blank or comment line inside the table: noted, and remembered for the rows' line numbers.
  void read_through(int ln, std::string_view what) {
    skipped_at.push_back(rows.size());
    in.info.notes.push_back(fmt::format("line {}: {} inside the table, read through", ln, what));
  }

  // A line before the header: the header itself, or preamble (with the errors it may explain).
  void before_header(std::string_view line, std::string_view tl, int ln) {
    const char d = p.delimiter ? p.delimiter : guess_delimiter(line);
    if (d != 0 && tl.front() != '#' && mentions_any(line, p.well_columns) && try_header(line, d, ln)) return;
    if (!headless && looks_like_observation(in.cp, line, d))
      headless = InputError(at(ln, 1, line),
                            "expected a header line naming the well, time and value columns before this data row, "
                            "found none",
                            {"restore the header line, or set `columns.well`, `columns.time` and `columns.value` "
                             "in the profile to this file's header names"});
    if (!near_delim && !in.prefix_only && p.delimiter != 0 && guess_delimiter(line) != 0 &&
        guess_delimiter(line) != p.delimiter) {
      split_views_into(line, guess_delimiter(line), views, scratch);
      if (find_column(views, p.well_columns) >= 0 && find_time_column(views, p.time_columns) >= 0)
        near_delim = delimiter_error(at(ln, 1, line), line, p.delimiter, views.size(), "header fields");
    }
    match_capture(in.cp, line, run.metadata);
    in.info.saw_preamble(line, ln);
  }

  // No column the profile calls a value: the lone signal-named column holds the values.
  void signal_column(Columns& c) {
    std::optional<SectionStart> signal;
    c.value = lone_signal_column(p, views, c.well, c.time, &signal);
    if (c.value < 0) return;
    c.value_signal = std::move(signal);
    c.value_header = std::string(trim(views[static_cast<std::size_t>(c.value)].text));
  }

  // True when `line` names the well, time and value columns: they become the table's columns.
  bool try_header(std::string_view line, char d, int ln) {
    split_views_into(line, d, views, scratch);
    Columns c;
    c.delimiter = d;
    // (in turn: a line of another table, say a 1536-well wide row, is dropped at the first)
    c.well = find_column(views, p.well_columns);
    if (c.well < 0 && (c.well = lone_well_column(views)) >= 0)
      c.well_header = std::string(trim(views[static_cast<std::size_t>(c.well)].text));
    if (c.well >= 0) c.time = find_time_column(views, p.time_columns);
    if (c.time >= 0) c.value = find_column(views, p.value_columns);
    if (c.well >= 0 && c.time >= 0 && c.value < 0) signal_column(c);
    if (c.well < 0 || c.time < 0 || c.value < 0) {
      if (c.well >= 0 && !near) near = near_header(p, c, views, line, file, ln);
      return false;
    }
    c.channel = find_column(views, p.channel_columns);
    c.temp = -1;
    for (std::size_t i = 0; i < views.size() && c.temp < 0; ++i)
      if (temperature_header(views[i].text, p.temperature_columns)) c.temp = static_cast<int>(i);
    c.count = views.size();
    c.line = ln;
    const FieldView& tf = views[static_cast<std::size_t>(c.time)];
    const auto stated = unit_in_header(tf.text);
    check_stated_unit(p, stated, at(ln, tf.column, line), fmt::format("the time header \"{}\"", trim(tf.text)));
    c.time_unit = stated.value_or(p.time_unit);
    in.info.time_unit = c.time_unit;
    in.info.time_basis = stated ? fmt::format("the time header \"{}\"", trim(tf.text)) : p.time_unit_from;
    in.info.time_where = at(ln, tf.column, line);
    in.info.delimiter = d;
    in.info.delimiter_line = p.delimiter ? 0 : ln;
    if (!c.well_header.empty())
      in.info.notes.push_back(fmt::format("line {}: the well column is \"{}\", the one header with the word well "
                                          "(`columns.well` names none of this file's headers)",
                                          ln, c.well_header));
    cols = c;
    return true;
  }

  // One row of the table; false when a prefix read stops at a row cut short.
  bool read_row(std::string_view line, int ln) {
    split_views_into(line, cols->delimiter, views, scratch);
    if (views.size() == cols->count + 1 && trim(views.back().text).empty()) views.pop_back();
    if (views.size() != cols->count) {
      if (in.prefix_only && rows.size() > 0) return false;
      if (auto e = delimiter_error(at(ln, 1, line), line, cols->delimiter, cols->count, "fields")) throw *e;
      int col = views.size() > cols->count ? views[cols->count].column : static_cast<int>(line.size()) + 1;
      throw InputError(at(ln, col, line),
                       fmt::format("expected {} fields as in the header at line {}, found {}", cols->count, cols->line,
                                   views.size()),
                       {"check for a truncated or extra field; delete an incomplete last line to use the rest"});
    }
    const FieldView& wf = views[static_cast<std::size_t>(cols->well)];
    auto w = parse_well(wf.text);
    if (!w) {
      throw InputError(at(ln, wf.column, line), fmt::format("expected a well name (A1 … AF48), found \"{}\"", trim(wf.text)),
                       {"check the well column; names are a row letter (A–Z, AA–AF) and a column number"});
    }
    if (fixed && !fixed->holds(*w)) off_plate_error(*fixed, *w, at(ln, wf.column, line));
    const FieldView& tf = views[static_cast<std::size_t>(cols->time)];
    auto t = parse_time(tf.text, cols->time_unit, p.decimal);
    in.info.saw_time(tf.text);
    if (!t) {
      bad_time_error(at(ln, tf.column, line), tf.text, cols->time_unit, p.decimal, "a read time",
                     {"write times as numbers (unit from the header or `time_unit`) or as h:mm:ss"});
    }
    Row r{};
    r.well = static_cast<std::uint16_t>(w->row * 48 + w->column);
    const ReadStatus status = read_value(line, ln, *w, r.value);
    double temp_c = std::nan("");
    if (cols->temp >= 0) {
      const FieldView& f = views[static_cast<std::size_t>(cols->temp)];
      temp_c = temperature_cell(in.cp, p, file, ln, f.column, line, f.text);
    }
    record(r, status, *t, temp_c, channel_of(line, ln), ln);
    return true;
  }

  // The value cell of a row: the number, or NaN with the status that says why.
  ReadStatus read_value(std::string_view line, int ln, WellId w, double& value) {
    ReadStatus status = ReadStatus::ok;
    const FieldView& vf = views[static_cast<std::size_t>(cols->value)];
    switch (read_cell(in.cp, vf.text, value)) {
      case CellKind::number:
        break;
      case CellKind::overflow:
        in.info.saw_overflow(vf.text);
        value = std::nan("");
        status = ReadStatus::overflow;
        break;
      case CellKind::missing:
        value = std::nan("");
        status = ReadStatus::missing;
        break;
      case CellKind::bad:
        bad_value_error(p, file, ln, vf.column, line, vf.text, "well " + well_name(w));
    }
    if (in.first_value && in.first_value->line == 0) *in.first_value = at(ln, vf.column, line);
    return status;
  }

  // The index of a row's channel: its channel cell's name, or the profile's one channel.
  std::size_t channel_of(std::string_view line, int ln) {
    if (cols->channel < 0) {
      if (channels.empty()) {
        channels.emplace_back();
        channels.back().name = cols->value_signal ? cols->value_signal->name : p.signal_name;
      }
      return 0;
    }
    const FieldView& f = views[static_cast<std::size_t>(cols->channel)];
    const std::string_view name = trim(f.text);
    if (name.empty())
      throw InputError(at(ln, f.column, line), "expected a channel name, found an empty field",
                       {"name the channel on every row"});
    if (name == last_channel_text) return last_channel;
    auto it = std::find_if(channels.begin(), channels.end(), [&](const ChannelRows& c) { return c.name == name; });
    const auto ch = static_cast<std::size_t>(it - channels.begin());
    if (it == channels.end()) {
      if (channels.size() == 0xffff)
        throw InputError(at(ln, f.column, line), "more than 65535 channels in one file", {"split the file by channel"});
      channels.emplace_back();
      channels.back().name = std::string(name);
    }
    last_channel_text = std::string(name);
    last_channel = ch;
    return ch;
  }

  // Keeps a row's record, the first duplicated (time, well) of its channel, and its temperature.
  void record(Row r, ReadStatus status, double t, double temp_c, std::size_t ch, int ln) {
    ChannelRows& c = channels[ch];
    const std::uint32_t read = c.read_of(t);
    if (read > k_read_mask) throw InputError(Where{file, ln}, "more than 2^30 distinct read times in one channel", {});
    r.read = read | (static_cast<std::uint32_t>(status) << 30);
    r.channel = static_cast<std::uint16_t>(ch);
    std::uint64_t& word = c.seen[read * ChannelRows::k_words + r.well / 64];
    const std::uint64_t bit = std::uint64_t{1} << (r.well % 64);
    if (word & bit) {
      // A second row for this (time, well): the one that sorts first by time, then well, is reported.
      if (!c.dup || t < c.dup_time || (t == c.dup_time && r.well < c.dup_well)) {
        c.dup = true;
        c.dup_time = t;
        c.dup_well = r.well;
        c.dup_read = read;
        c.dup_row = rows.size();
      }
    }
    word |= bit;
    c.wells[r.well] = true;
    if (!std::isnan(temp_c) && r.well < c.temp_well[read]) {
      c.temp[read] = temp_c;
      c.temp_well[read] = r.well;
    }
    rows.push(r);
  }

  // After the last line: a header and a row were found (else the likeliest reason why not).
  void check_found() const {
    if (!cols && near_delim) throw *near_delim;
    if (!cols && near) throw *near;
    if (!cols && headless) throw *headless;
    if (!cols) {
      throw InputError(
          Where{file}, "found no header naming the well, time and value columns",
          {"set `columns.well`, `columns.time` and `columns.value` in the profile to this file's header names",
           "try another profile with --profile"});
    }
    if (channels.empty()) {
      throw InputError(Where{file, cols->line}, "the table has a header but no rows",
                       {"check that the export is complete"});
    }
  }

  // The file line of a row: rows follow the header line, one per line, except blank and
  // comment lines.
  int line_of(std::size_t row) const {
    const auto skips = std::upper_bound(skipped_at.begin(), skipped_at.end(), row) - skipped_at.begin();
    return cols->line + 1 + static_cast<int>(row) + static_cast<int>(skips);
  }

  // A (time, well) given twice in a channel: the error names both lines.
  void check_duplicates() const {
    for (std::size_t c = 0; c < channels.size(); ++c) {
      const ChannelRows& cr = channels[c];
      if (!cr.dup) continue;
      std::size_t first = 0;
      while (first < cr.dup_row && !(rows[first].channel == c && rows[first].well == cr.dup_well &&
                                     (rows[first].read & k_read_mask) == cr.dup_read))
        ++first;
      throw InputError(
          Where{file, line_of(cr.dup_row)},
          fmt::format("well {} has two rows for time {} s in channel {} (the other at line {})",
                      well_name(WellId{cr.dup_well / 48, cr.dup_well % 48}), cr.dup_time, cr.name, line_of(first)),
          {"remove the duplicated observation"});
    }
  }

  // The plate format from every well that gave a row.
  void decide_plate() {
    std::vector<WellId> all;
    for (int k = 0; k < k_max_wells; ++k)
      for (const auto& c : channels)
        if (c.wells[static_cast<std::size_t>(k)]) {
          all.push_back(WellId{k / 48, k % 48});
          break;
        }
    run.format = decide_format(p, all, file, run.format_inferred);
  }
};

}  // namespace

Run read_long(ReaderInput in) {
  LongRead r{in};
  std::string_view line;
  while (in.src.next(line)) {
    const int ln = in.src.line_number();
    const std::string_view tl = trim(line);
    if (tl.empty()) {
      if (r.cols) r.read_through(ln, "a blank line");
      continue;
    }
    if (!r.cols) {
      r.before_header(line, tl, ln);
      continue;
    }
    if (tl.front() == '#') {
      r.read_through(ln, "a comment line");
      match_capture(in.cp, line, r.run.metadata);
      in.info.saw_preamble(line, ln);
      continue;
    }
    if (!r.read_row(line, ln)) break;
  }
  r.check_found();
  r.decide_plate();
  r.check_duplicates();
  const LongColumns cols{r.cols->channel >= 0, r.cols->temp >= 0, r.cols->line, r.cols->value_signal,
                         r.cols->value_header};
  lay_out_channels(r.channels, r.rows, cols, r.p, in.info, r.run);
  return std::move(r.run);
}

}  // namespace vzero::detail
