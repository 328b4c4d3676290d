// The grid reader's line-level steps (src/ingest/grid_lines.cpp): a read label, a header of
// column numbers, one plate row's values, and the errors for plate data out of place.
#pragma once

#include <re2/re2.h>

#include <cmath>
#include <optional>
#include <string>
#include <vector>

#include "ingest/reader_common.hpp"

namespace vzero::detail {

// A read label's facts.
struct Block {
  double time_s = 0;
  double temp_c = std::nan("");
  int label_line = 0;
  std::string label_text;
};

// Plate data outside any read: a header of column numbers (kept until the next line shows
// whether plate rows follow it: a plate layout block of text is no data) and plate rows.
struct Stray {
  std::optional<InputError> error;  // the first, thrown at the end unless no read label matched at all
  int header_line = 0;              // a header of column numbers just before, outside any read
  std::string header_text;
};

// A line among a read's rows that is not a plate row but has a row's fields (the values of
// each column): a row label off the plate's rows ("AG", "B.", "E:"), or another delimiter.
void off_grid_row(const CompiledProfile& cp, std::string_view rl, char d, std::size_t columns, const Where& here);

// The error for two reads of a channel whose plate rows differ: at the read that lacks a row
// the other has, where that row belongs (the line of the row found there instead, or the
// line of its last row).
[[noreturn]] void row_mismatch(const std::vector<int>& first, const std::vector<int>& first_lines,
                               const std::vector<int>& rows, const std::vector<int>& row_lines, int label_line,
                               Where where);

// A line outside any read: an error when it is a plate row (at the header of column numbers
// before it, if any, or at the line of another kind that ended a read's rows).
void stray_grid_line(const CompiledProfile& cp, std::string_view line, const Where& here, int ended_line,
                     const std::string& ended_text, Stray& st);

// The read time (and temperature) of a read label; a unit written after the time
// ("at 30 s") states the unit. Notes the time unit's basis in `in.info` at the first label.
Block read_label(ReaderInput& in, std::string_view line, int ln, const re2::StringPiece& time_sp,
                 const std::string& temp_text);

// The 0-based plate columns a header of column numbers names (`at`: its file, line and text).
std::vector<int> column_numbers(const std::vector<Field>& fields, const std::optional<PlateFormat>& fixed, Where at,
                                int ln);

// Appends one plate row's values and read statuses to `vals` and `stats`.
void read_row_values(ReaderInput& in, const std::vector<FieldView>& rf, const std::vector<int>& cols, int row, int rln,
                     std::string_view rl, std::vector<double>& vals, std::vector<ReadStatus>& stats);

}  // namespace vzero::detail
