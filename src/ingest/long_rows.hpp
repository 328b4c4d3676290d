// The long reader's row records: 16 bytes per observation in blocks mapped from the OS,
// and each channel's distinct read times (src/ingest/read_long.cpp).
#pragma once

#include <sys/mman.h>

#include <cmath>
#include <cstdint>
#include <new>
#include <optional>
#include <string>
#include <unordered_map>
#include <vector>

#include "ingest/reader_common.hpp"

namespace vzero::detail::long_rows {

constexpr int k_max_wells = 32 * 48;  // row * 48 + column, the largest plate's layout

// One observation. The status sits in the top two bits of `read`.
struct Row {
  double value;        // NaN unless the status is ok
  std::uint32_t read;  // index of the row's time among its channel's distinct times
  std::uint16_t well;  // row * 48 + column
  std::uint16_t channel;
};
static_assert(sizeof(Row) == 16);
constexpr std::uint32_t k_read_mask = (1u << 30) - 1;

// Rows in file order, in blocks mapped from the OS so that each can be given back at once.
class RowStore {
 public:
  static constexpr std::size_t k_block = std::size_t{1} << 20;  // rows per block (16 MiB)
  RowStore() = default;
  RowStore(const RowStore&) = delete;
  RowStore& operator=(const RowStore&) = delete;
  ~RowStore() {
    for (std::size_t b = 0; b < blocks_.size(); ++b) release(b);
  }
  void push(const Row& r) {
    if (size_ % k_block == 0) {
      void* m = mmap(nullptr, k_block * sizeof(Row), PROT_READ | PROT_WRITE, MAP_PRIVATE | MAP_ANONYMOUS, -1, 0);
      if (m == MAP_FAILED) throw std::bad_alloc();
      blocks_.push_back(static_cast<Row*>(m));
    }
    blocks_.back()[size_ % k_block] = r;
    ++size_;
  }
  std::size_t size() const { return size_; }
  const Row& operator[](std::size_t k) const { return blocks_[k / k_block][k % k_block]; }
  void release(std::size_t b) {
    if (blocks_[b]) munmap(blocks_[b], k_block * sizeof(Row));
    blocks_[b] = nullptr;
  }

 private:
  std::vector<Row*> blocks_;
  std::size_t size_ = 0;
};

// A channel's distinct read times and what is known per time.
struct ChannelRows {
  std::string name;
  std::vector<double> times;                        // by read index, in order of first appearance
  std::unordered_map<double, std::uint32_t> index;  // time → read index
  std::uint32_t last = 0;                           // read index of the previous row
  std::vector<std::uint64_t> seen;                  // bit per (read, well): a row was given
  std::vector<double> temp;                         // by read: temperature of the lowest well giving one
  std::vector<std::uint16_t> temp_well;
  std::vector<bool> wells = std::vector<bool>(k_max_wells, false);
  // The duplicated (time, well) that sorts first, and the row that repeated it.
  bool dup = false;
  double dup_time = 0;
  std::uint16_t dup_well = 0;
  std::uint32_t dup_read = 0;
  std::size_t dup_row = 0;

  static constexpr std::size_t k_words = k_max_wells / 64;  // bitset words per read

  std::uint32_t read_of(double t) {
    // Rows usually come time by time or well by well: try the previous, the next and the
    // first time before the table.
    if (!times.empty()) {
      if (times[last] == t) return last;
      if (last + 1 < times.size() && times[last + 1] == t) return ++last;
      if (times[0] == t) return last = 0;
    }
    const auto [it, fresh] = index.try_emplace(t, static_cast<std::uint32_t>(times.size()));
    if (fresh) {
      times.push_back(t);
      seen.resize(seen.size() + k_words, 0);
      temp.push_back(NAN);
      temp_well.push_back(std::uint16_t{0xffff});
    }
    return last = it->second;
  }
};

// What the header said that the matrices need.
struct LongColumns {
  bool channel = false;      // a channel column names each row's channel
  bool temperature = false;  // a temperature column
  int header_line = 0;
  std::optional<SectionStart> value_signal;  // no channel column: the value column's header names the signal
  std::string value_header;                  // that header as written
};

// Lays the rows out as each channel's reads × wells matrices (reads in time order, wells in
// plate order of run.format; a cell without a row is missing), giving each block of rows
// back as soon as its rows are in (src/ingest/read_long_layout.cpp).
void lay_out_channels(const std::vector<ChannelRows>& channels, RowStore& rows, const LongColumns& cols,
                      const Profile& p, ReadInfo& info, Run& run);

}  // namespace vzero::detail::long_rows
