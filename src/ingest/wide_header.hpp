// The wide reader's header line: which column holds the time, the temperature, each well
// (src/ingest/read_wide.cpp reads the rows under it). Internal to the readers.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "ingest/reader_common.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

// padding: an empty header field at the end of the line (with only empty ones after it),
// whose cells must be empty too.
enum class ColumnRole { time, temperature, ignored, padding, well };

struct Header {
  char delimiter = ',';
  std::vector<ColumnRole> roles;
  std::vector<int> slot;  // well slot per column (within its channel), -1 otherwise
  std::vector<WellId> wells;
  // Well columns that carry a channel tag beside the well ("A1 (340)", "A1 [405 nm]",
  // "ex485/em520 A1"): the distinct tags in order of first use, one channel each, and each
  // tag's wells (slot order). Empty for bare well names, whose wells are `wells`.
  std::vector<std::string> tags;
  std::vector<std::vector<WellId>> tag_wells;
  std::vector<int> chan;       // per column: its tag's index (0 when untagged), -1 for other columns
  std::string tagged_example;  // the first tagged header cell, for the read note
  const std::vector<WellId>& wells_of(int c) const { return tags.empty() ? wells : tag_wells[static_cast<std::size_t>(c)]; }
  int time_col = -1, temp_col = -1;
  TimeUnit time_unit = TimeUnit::seconds;
  std::string time_basis;  // what states the unit; empty when nothing does
  Where time_where;        // the time header cell
  int line = 0;
};

// A header line has a time column and at least one well column: its columns' roles, or
// nullopt. Well columns are named by their wells alone, or every one of them by its well and
// a channel tag. The first line that is nearly one (well columns without a time column, or a time
// column beside well names written among other words) leaves in `near` the error to give
// if no header is found. `delimiter` 0: guessed from the line.
std::optional<Header> try_header(const Profile& p, std::string_view line, const std::string& file, int line_no,
                                 std::vector<Field>& fields, std::optional<InputError>& near, char delimiter);

}  // namespace vzero::detail
