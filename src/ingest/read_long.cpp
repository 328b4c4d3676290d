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
#include <sys/mman.h>

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <map>
#include <new>
#include <numeric>
#include <unordered_map>

#include "ingest/long_rows.hpp"
#include "ingest/reader_common.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

using namespace long_rows;

struct Columns {
  char delimiter = ',';
  int well = -1, time = -1, value = -1, channel = -1, temp = -1;
  std::size_t count = 0;
  TimeUnit time_unit = TimeUnit::seconds;
  int line = 0;
};

// True when one of `names` occurs in `line`, ignoring ASCII case: a line that lacks every
// well-column name cannot be the header, and is passed over without splitting it (detection
// tries this reader on every file, wide ones included).
bool mentions_any(std::string_view line, const std::vector<std::string>& names) {
  thread_local std::string lowered;
  lowered.assign(line);
  for (char& c : lowered)
    if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
  for (const auto& n : names) {
    std::string name(trim(n));
    if (name.empty()) return true;  // an empty name matches an empty field: split to see
    for (char& c : name)
      if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
    if (lowered.find(name) != std::string::npos) return true;
  }
  return false;
}

int find_column(const std::vector<FieldView>& f, const std::vector<std::string>& names) {
  for (const auto& n : names)
    for (std::size_t i = 0; i < f.size(); ++i)
      if (iequals(trim(f[i].text), n)) return static_cast<int>(i);
  return -1;
}

// For a line naming the well column and one of the time and value columns but not the
// other (the header, most likely, with that column under another name): the error to give
// if no header is found.
std::optional<InputError> near_header(const Profile& p, Columns c, const std::vector<FieldView>& views,
                                      std::string_view line, const std::string& file, int line_no) {
  if (c.time < 0) c.value = find_column(views, p.value_columns);
  if (c.time < 0 && c.value < 0) return std::nullopt;
  // The one field that no column of the profile names, if there is one: the missing column.
  const auto named = [](std::string_view name, const std::vector<std::string>& names) {
    return std::any_of(names.begin(), names.end(), [&](const std::string& n) { return iequals(name, n); });
  };
  const FieldView* unknown = nullptr;
  int unknowns = 0;
  for (std::size_t i = 0; i < views.size(); ++i) {
    const auto k = static_cast<int>(i);
    const std::string_view name = trim(views[i].text);
    if (name.empty() || k == c.well || k == c.time || k == c.value) continue;
    if (named(name, p.channel_columns) || temperature_header(name, p.temperature_columns)) continue;
    unknown = &views[i];
    ++unknowns;
  }
  if (unknowns != 1) unknown = nullptr;
  return missing_column_error(Where{file, line_no, unknown ? unknown->column : 1, std::string(line)},
                              c.time < 0 ? "time" : "value", c.time < 0 ? p.time_columns : p.value_columns, "",
                              unknown ? trim(unknown->text) : std::string_view());
}

}  // namespace

Run read_long(ReaderInput in) {
  const Profile& p = in.cp.profile;
  const std::string& file = in.src.name();
  Run run;
  std::optional<Columns> cols;
  std::vector<FieldView> views;  // fields as views: no allocation per value
  std::string scratch;
  std::string_view line;
  std::vector<ChannelRows> channels;  // in order of first appearance
  RowStore rows;
  std::vector<std::size_t> skipped_at;  // rows read before each blank or comment line of the table
  std::string last_channel_text;
  std::size_t last_channel = 0;
  const std::optional<PlateFormat> fixed = fixed_format(p);
  std::optional<InputError> near;        // a line naming the well column and only one of time and value
  std::optional<InputError> near_delim;  // a header split with another delimiter than the profile's
  std::optional<InputError> headless;    // a data row (one well name, numbers) before any header

  while (in.src.next(line)) {
    const int ln = in.src.line_number();
    std::string_view tl = trim(line);
    if (tl.empty()) {
      if (cols) {
        skipped_at.push_back(rows.size());
        in.info.notes.push_back(fmt::format("line {}: a blank line inside the table, read through", ln));
      }
      continue;
    }
    if (!cols) {
      char d = p.delimiter ? p.delimiter : guess_delimiter(line);
      if (d != 0 && tl.front() != '#' && mentions_any(line, p.well_columns)) {
        split_views_into(line, d, views, scratch);
        Columns c;
        c.delimiter = d;
        // (in turn: a line of another table, say a 1536-well wide row, is dropped at the first)
        c.well = find_column(views, p.well_columns);
        if (c.well >= 0) c.time = find_column(views, p.time_columns);
        if (c.time >= 0) c.value = find_column(views, p.value_columns);
        if (c.well >= 0 && c.time >= 0 && c.value >= 0) {
          c.channel = find_column(views, p.channel_columns);
          c.temp = -1;
          for (std::size_t i = 0; i < views.size() && c.temp < 0; ++i)
            if (temperature_header(views[i].text, p.temperature_columns)) c.temp = static_cast<int>(i);
          c.count = views.size();
          c.line = ln;
          const FieldView& tf = views[static_cast<std::size_t>(c.time)];
          const auto stated = unit_in_header(tf.text);
          check_stated_unit(p, stated, Where{file, ln, tf.column, std::string(line)},
                            fmt::format("the time header \"{}\"", trim(tf.text)));
          c.time_unit = stated.value_or(p.time_unit);
          in.info.time_unit = c.time_unit;
          in.info.time_basis = stated ? fmt::format("the time header \"{}\"", trim(tf.text)) : p.time_unit_from;
          in.info.time_where = Where{file, ln, tf.column, std::string(line)};
          in.info.delimiter = d;
          in.info.delimiter_line = p.delimiter ? 0 : ln;
          cols = c;
          continue;
        }
        if (c.well >= 0 && !near) near = near_header(p, c, views, line, file, ln);
      }
      if (!headless && looks_like_observation(in.cp, line, p.delimiter ? p.delimiter : guess_delimiter(line)))
        headless = InputError(Where{file, ln, 1, std::string(line)},
                              "expected a header line naming the well, time and value columns before this data row, "
                              "found none",
                              {"restore the header line, or set `columns.well`, `columns.time` and `columns.value` "
                               "in the profile to this file's header names"});
      if (!near_delim && !in.prefix_only && p.delimiter != 0 && guess_delimiter(line) != 0 &&
          guess_delimiter(line) != p.delimiter) {
        split_views_into(line, guess_delimiter(line), views, scratch);
        if (find_column(views, p.well_columns) >= 0 && find_column(views, p.time_columns) >= 0)
          near_delim =
              delimiter_error(Where{file, ln, 1, std::string(line)}, line, p.delimiter, views.size(), "header fields");
      }
      match_capture(in.cp, line, run.metadata);
      in.info.saw_preamble(line, ln);
      continue;
    }
    if (tl.front() == '#') {
      skipped_at.push_back(rows.size());
      in.info.notes.push_back(fmt::format("line {}: a comment line inside the table, read through", ln));
      match_capture(in.cp, line, run.metadata);
      in.info.saw_preamble(line, ln);
      continue;
    }
    split_views_into(line, cols->delimiter, views, scratch);
    if (views.size() == cols->count + 1 && trim(views.back().text).empty()) views.pop_back();
    if (views.size() != cols->count) {
      if (in.prefix_only && rows.size() > 0) break;
      if (auto e = delimiter_error(Where{file, ln, 1, std::string(line)}, line, cols->delimiter, cols->count, "fields"))
        throw *e;
      int col = views.size() > cols->count ? views[cols->count].column : static_cast<int>(line.size()) + 1;
      throw InputError(Where{file, ln, col, std::string(line)},
                       fmt::format("expected {} fields as in the header at line {}, found {}", cols->count, cols->line,
                                   views.size()),
                       {"check for a truncated or extra field; delete an incomplete last line to use the rest"});
    }
    const FieldView& wf = views[static_cast<std::size_t>(cols->well)];
    auto w = parse_well(wf.text);
    if (!w) {
      throw InputError(Where{file, ln, wf.column, std::string(line)},
                       fmt::format("expected a well name (A1 … AF48), found \"{}\"", trim(wf.text)),
                       {"check the well column; names are a row letter (A–Z, AA–AF) and a column number"});
    }
    if (fixed && !fixed->holds(*w)) off_plate_error(*fixed, *w, Where{file, ln, wf.column, std::string(line)});
    const FieldView& tf = views[static_cast<std::size_t>(cols->time)];
    auto t = parse_time(tf.text, cols->time_unit, p.decimal);
    in.info.saw_time(tf.text);
    if (!t) {
      bad_time_error(Where{file, ln, tf.column, std::string(line)}, tf.text, cols->time_unit, p.decimal, "a read time",
                     {"write times as numbers (unit from the header or `time_unit`) or as h:mm:ss"});
    }
    Row r{};
    r.well = static_cast<std::uint16_t>(w->row * 48 + w->column);
    ReadStatus status = ReadStatus::ok;
    const FieldView& vf = views[static_cast<std::size_t>(cols->value)];
    switch (read_cell(in.cp, vf.text, r.value)) {
      case CellKind::number:
        break;
      case CellKind::overflow:
        in.info.saw_overflow(vf.text);
        r.value = std::nan("");
        status = ReadStatus::overflow;
        break;
      case CellKind::missing:
        r.value = std::nan("");
        status = ReadStatus::missing;
        break;
      case CellKind::bad:
        bad_value_error(p, file, ln, vf.column, line, vf.text, "well " + well_name(*w));
    }
    if (in.first_value && in.first_value->line == 0) *in.first_value = Where{file, ln, vf.column, std::string(line)};
    double temp_c = std::nan("");
    if (cols->temp >= 0) {
      const FieldView& f = views[static_cast<std::size_t>(cols->temp)];
      temp_c = temperature_cell(in.cp, p, file, ln, f.column, line, f.text);
    }
    std::size_t ch = 0;
    if (cols->channel >= 0) {
      std::string_view name = trim(views[static_cast<std::size_t>(cols->channel)].text);
      if (name.empty()) {
        throw InputError(Where{file, ln, views[static_cast<std::size_t>(cols->channel)].column, std::string(line)},
                         "expected a channel name, found an empty field", {"name the channel on every row"});
      }
      if (name == last_channel_text) {
        ch = last_channel;
      } else {
        auto it = std::find_if(channels.begin(), channels.end(), [&](const ChannelRows& c) { return c.name == name; });
        ch = static_cast<std::size_t>(it - channels.begin());
        if (it == channels.end()) {
          if (channels.size() == 0xffff)
            throw InputError(Where{file, ln, views[static_cast<std::size_t>(cols->channel)].column, std::string(line)},
                             "more than 65535 channels in one file", {"split the file by channel"});
          channels.emplace_back();
          channels.back().name = std::string(name);
        }
        last_channel_text = std::string(name);
        last_channel = ch;
      }
    } else if (channels.empty()) {
      channels.emplace_back();
      channels.back().name = p.signal_name;
    }
    ChannelRows& c = channels[ch];
    const std::uint32_t read = c.read_of(*t);
    if (read > k_read_mask) throw InputError(Where{file, ln}, "more than 2^30 distinct read times in one channel", {});
    r.read = read | (static_cast<std::uint32_t>(status) << 30);
    r.channel = static_cast<std::uint16_t>(ch);
    std::uint64_t& word = c.seen[read * ChannelRows::k_words + r.well / 64];
    const std::uint64_t bit = std::uint64_t{1} << (r.well % 64);
    if (word & bit) {
      // A second row for this (time, well): the one that sorts first by time, then well, is reported.
      if (!c.dup || *t < c.dup_time || (*t == c.dup_time && r.well < c.dup_well)) {
        c.dup = true;
        c.dup_time = *t;
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
  std::vector<WellId> all;
  for (int k = 0; k < k_max_wells; ++k)
    for (const auto& c : channels)
      if (c.wells[static_cast<std::size_t>(k)]) {
        all.push_back(WellId{k / 48, k % 48});
        break;
      }
  run.format = decide_format(p, all, file, run.format_inferred);

  // The file line of a row: rows follow the header line, one per line, except blank and
  // comment lines.
  const auto line_of = [&](std::size_t row) {
    const auto skips = std::upper_bound(skipped_at.begin(), skipped_at.end(), row) - skipped_at.begin();
    return cols->line + 1 + static_cast<int>(row) + static_cast<int>(skips);
  };
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

  // Matrices: reads in time order, wells in plate order.
  struct Layout {
    std::vector<std::uint32_t> rank;  // read index → matrix row
    std::vector<int> column;          // well → matrix column, −1 when absent
    Eigen::Index reads = 0;
  };
  std::vector<Layout> layout(channels.size());
  run.channels.resize(channels.size());
  for (std::size_t c = 0; c < channels.size(); ++c) {
    const ChannelRows& cr = channels[c];
    Channel& ch = run.channels[c];
    SectionStart s = default_section(p);
    if (cols->channel >= 0) {
      s.name = cr.name;
      s.quantity = Quantity::other;
      s.unit = p.signal_unit;
      guess_quantity(s.name, s.quantity, s.unit);
      if (s.quantity == Quantity::other) s.quantity = p.signal_quantity;
      in.info.channels.emplace_back(s.name, fmt::format("the channel column of the header at line {}", cols->line));
    } else {
      in.info.channels.emplace_back(s.name, channel_basis(s, p));
    }
    ch.name = s.name;
    ch.quantity = s.quantity;
    ch.unit = s.unit;
    std::vector<std::uint32_t> order(cr.times.size());
    std::iota(order.begin(), order.end(), 0u);
    std::sort(order.begin(), order.end(), [&](std::uint32_t x, std::uint32_t y) { return cr.times[x] < cr.times[y]; });
    Layout& lay = layout[c];
    lay.reads = static_cast<Eigen::Index>(order.size());
    lay.rank.resize(order.size());
    for (std::size_t i = 0; i < order.size(); ++i) {
      lay.rank[order[i]] = static_cast<std::uint32_t>(i);
      ch.time_s.push_back(cr.times[order[i]]);
    }
    lay.column.assign(k_max_wells, -1);
    std::vector<std::pair<int, int>> present;  // (plate index, well)
    for (int k = 0; k < k_max_wells; ++k)
      if (cr.wells[static_cast<std::size_t>(k)]) present.emplace_back(run.format.index(WellId{k / 48, k % 48}), k);
    std::sort(present.begin(), present.end());
    for (std::size_t j = 0; j < present.size(); ++j) {
      lay.column[static_cast<std::size_t>(present[j].second)] = static_cast<int>(j);
      ch.wells.push_back(present[j].first);
    }
    // Left unfilled so that pages are touched only as rows arrive; cells without a row are
    // set to missing afterwards, from the `seen` bits.
    ch.values.resize(lay.reads, static_cast<Eigen::Index>(present.size()));
    ch.status.resize(lay.reads, static_cast<Eigen::Index>(present.size()));
    if (cols->temp >= 0) {
      ch.temperature_c.assign(ch.time_s.size(), std::nan(""));
      for (std::size_t i = 0; i < order.size(); ++i) ch.temperature_c[i] = cr.temp[order[i]];
      if (std::all_of(ch.temperature_c.begin(), ch.temperature_c.end(), [](double v) { return std::isnan(v); }))
        ch.temperature_c.clear();
    }
  }
  for (std::size_t k = 0; k < rows.size(); ++k) {
    const Row& r = rows[k];
    const Layout& lay = layout[r.channel];
    Channel& ch = run.channels[r.channel];
    const Eigen::Index i = lay.rank[r.read & k_read_mask], j = lay.column[r.well];
    ch.values(i, j) = r.value;
    ch.status(i, j) = static_cast<ReadStatus>(r.read >> 30);
    if ((k + 1) % RowStore::k_block == 0) rows.release(k / RowStore::k_block);
  }
  for (std::size_t c = 0; c < channels.size(); ++c) {
    const ChannelRows& cr = channels[c];
    Channel& ch = run.channels[c];
    const Layout& lay = layout[c];
    for (std::size_t read = 0; read < cr.times.size(); ++read) {
      const Eigen::Index i = lay.rank[read];
      for (int w = 0; w < k_max_wells; ++w) {
        const int j = lay.column[static_cast<std::size_t>(w)];
        if (j < 0 || (cr.seen[read * ChannelRows::k_words + static_cast<std::size_t>(w) / 64] >> (w % 64)) & 1)
          continue;
        ch.values(i, j) = std::nan("");
        ch.status(i, j) = ReadStatus::missing;
      }
    }
  }
  return run;
}

}  // namespace vzero::detail
