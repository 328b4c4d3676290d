// The long reader's second half: its row records laid out as each channel's reads × wells
// matrices (src/ingest/read_long.cpp reads them; long_rows.hpp holds the records).
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <numeric>

#include "ingest/long_rows.hpp"

namespace vzero::detail::long_rows {

namespace {

// Where a channel's records go: read index → matrix row, well → matrix column.
struct Layout {
  std::vector<std::uint32_t> rank;  // read index → matrix row
  std::vector<int> column;          // well → matrix column, −1 when absent
  Eigen::Index reads = 0;
};

// A channel's name, quantity and unit: from its channel cell, or the profile's one channel.
void name_channel(const ChannelRows& cr, const LongColumns& cols, const Profile& p, ReadInfo& info, Channel& ch) {
  SectionStart s = default_section(p);
  if (cols.channel) {
    s.name = cr.name;
    s.quantity = Quantity::other;
    s.unit = p.signal_unit;
    guess_quantity(s.name, s.quantity, s.unit);
    if (s.quantity == Quantity::other) s.quantity = p.signal_quantity;
    info.channels.emplace_back(s.name, fmt::format("the channel column of the header at line {}", cols.header_line));
  } else if (cols.value_signal) {
    s = *cols.value_signal;
    info.channels.emplace_back(
        s.name, fmt::format("the value column's header \"{}\" at line {} (no column named as `columns.value` lists; "
                            "the header names a signal)",
                            cols.value_header, cols.header_line));
  } else {
    info.channels.emplace_back(s.name, channel_basis(s, p));
  }
  ch.name = s.name;
  ch.quantity = s.quantity;
  ch.unit = s.unit;
}

// A channel's time axis, wells and (unfilled) matrices, and where its records go.
Layout shape_channel(const ChannelRows& cr, bool temperature, const PlateFormat& format, Channel& ch) {
  std::vector<std::uint32_t> order(cr.times.size());
  std::iota(order.begin(), order.end(), 0u);
  std::sort(order.begin(), order.end(), [&](std::uint32_t x, std::uint32_t y) { return cr.times[x] < cr.times[y]; });
  Layout lay;
  lay.reads = static_cast<Eigen::Index>(order.size());
  lay.rank.resize(order.size());
  for (std::size_t i = 0; i < order.size(); ++i) {
    lay.rank[order[i]] = static_cast<std::uint32_t>(i);
    ch.time_s.push_back(cr.times[order[i]]);
  }
  lay.column.assign(k_max_wells, -1);
  std::vector<std::pair<int, int>> present;  // (plate index, well)
  for (int k = 0; k < k_max_wells; ++k)
    if (cr.wells[static_cast<std::size_t>(k)]) present.emplace_back(format.index(WellId{k / 48, k % 48}), k);
  std::sort(present.begin(), present.end());
  for (std::size_t j = 0; j < present.size(); ++j) {
    lay.column[static_cast<std::size_t>(present[j].second)] = static_cast<int>(j);
    ch.wells.push_back(present[j].first);
  }
  // Left unfilled so that pages are touched only as rows arrive; cells without a row are
  // set to missing afterwards, from the `seen` bits.
  ch.values.resize(lay.reads, static_cast<Eigen::Index>(present.size()));
  ch.status.resize(lay.reads, static_cast<Eigen::Index>(present.size()));
  if (temperature) {
    ch.temperature_c.assign(ch.time_s.size(), std::nan(""));
    for (std::size_t i = 0; i < order.size(); ++i) ch.temperature_c[i] = cr.temp[order[i]];
    if (std::all_of(ch.temperature_c.begin(), ch.temperature_c.end(), [](double v) { return std::isnan(v); }))
      ch.temperature_c.clear();
  }
  return lay;
}

// Cells no row gave: missing.
void mark_missing(const ChannelRows& cr, const Layout& lay, Channel& ch) {
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

}  // namespace

void lay_out_channels(const std::vector<ChannelRows>& channels, RowStore& rows, const LongColumns& cols,
                      const Profile& p, ReadInfo& info, Run& run) {
  std::vector<Layout> layout(channels.size());
  run.channels.resize(channels.size());
  for (std::size_t c = 0; c < channels.size(); ++c) {
    name_channel(channels[c], cols, p, info, run.channels[c]);
    layout[c] = shape_channel(channels[c], cols.temperature, run.format, run.channels[c]);
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
  for (std::size_t c = 0; c < channels.size(); ++c) mark_missing(channels[c], layout[c], run.channels[c]);
}

}  // namespace vzero::detail::long_rows
