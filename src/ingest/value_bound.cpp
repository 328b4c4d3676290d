#include "ingest/value_bound.hpp"

#include <algorithm>

namespace vzero::detail {

// Why each bound holds (the readers' code it rests on):
// - long (read_long.cpp): every row is one line and records one cell; cells no row gave are
//   missing (read_long_layout.cpp).
// - wide (read_wide.cpp): values are set only by `data_row`, once per field of a well column
//   of one line, or by AcrossBlock::add (wide_across.cpp), once per field after a well row's
//   first; fields are split at the block header's delimiter (the profile's, else
//   guess_delimiter's ',' ';' or tab; try_header and try_across_header refuse a line without one), and a split
//   (quoted or not) ends a field only at a delimiter, so a line has at most one field more than
//   delimiters. Cells no row set are missing (ChannelBuilder::add_read).
// - grid (read_grid.cpp): values are read only by `read_block`, after a line on which
//   `outside_line` found the read label with RE2::PartialMatch (a line that matches with the
//   label's groups captured matches without them too).
// The lines are those the readers get: a LineSource over the head, as detection makes it.
long long value_bound(const CompiledProfile& cp, std::string_view head) {
  const Profile& p = cp.profile;
  if (p.shape == Shape::grid && !cp.read_label) return k_no_value_bound;
  long long lines = 0, delimiters = 0;
  try {
    LineSource src("head", head, LineSource::NoHash{});
    std::string_view line;
    while (src.next(line)) {
      ++lines;
      switch (p.shape) {
        case Shape::long_form:
          break;
        case Shape::wide:
          if (p.delimiter != 0) {
            delimiters += std::count(line.begin(), line.end(), p.delimiter);
          } else {
            for (char c : line) delimiters += (c == ',') + (c == ';') + (c == '\t');  // vectorised
          }
          break;
        case Shape::grid:
          if (RE2::PartialMatch(line, *cp.read_label)) return k_no_value_bound;
          break;
      }
    }
  } catch (const InputError&) {
    return k_no_value_bound;
  }
  switch (p.shape) {
    case Shape::long_form:
      return lines;
    case Shape::wide:
      return lines + delimiters;
    case Shape::grid:
      return 0;
  }
  return k_no_value_bound;
}

}  // namespace vzero::detail
